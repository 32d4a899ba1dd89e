// A report for the client: one self-contained HTML file (styles inline, pictures embedded as
// data: URIs, no scripts, nothing fetched from a network), laid out for the screen and for
// printing on A4. Every text given here is plain text: the writer escapes it, so a surface or
// point named "<b>" appears as written. Temperatures written as the terminal writes them
// ("20.5 C": a digit, a space, C, no letter after) appear as "20.5 °C", kept on one line.
//
// The caller fills the plain structs below; `write_client_report` lays them out in this order:
// title and subtitle, a box "at a glance" with every verdict of every section (what, and
// whether it is met), the sections (paragraphs, verdicts with detail and source, tables,
// figures), the assumptions, and the cautions last, set apart.
#pragma once

#include <filesystem>
#include <string>
#include <vector>

namespace hearthray {

struct ReportTable {
  std::string caption;
  std::vector<std::string> header;             // may be empty: no header row
  std::vector<std::vector<std::string>> rows;  // shorter rows are padded with empty cells
};

// One check against a limit: e.g. what = "vertical radiant asymmetry at the desk", pass,
// detail = "3.1 K against 5 K (warm ceiling)", source = "ISO 7730:2005, Table A.4 (recalled)".
struct ReportVerdict {
  std::string what;
  bool pass = false;
  std::string detail;
  std::string source;
};

// A picture embedded in the report: a PNG or an SVG file (by its extension), read when the
// report is written.
struct ReportFigure {
  std::string caption;
  std::filesystem::path image;
};

struct ReportSection {
  std::string heading;
  std::vector<std::string> paragraphs;
  std::vector<ReportTable> tables;
  std::vector<ReportFigure> figures;
  std::vector<ReportVerdict> verdicts;
};

struct ClientReport {
  std::string title;
  std::string subtitle;
  std::vector<ReportSection> sections;
  std::vector<std::string> assumptions;
  std::vector<std::string> cautions;
};

// Writes `report` to `html` whole or not at all (temporary file, then rename). Throws
// InputError naming the file when a figure cannot be read or is neither PNG nor SVG, or when
// the report cannot be written. The same report gives the same bytes on every run.
void write_client_report(const ClientReport& report, const std::filesystem::path& html);

// The report as HTML text (what write_client_report writes), for tests and for callers that
// keep it elsewhere.
std::string client_report_html(const ClientReport& report);

}  // namespace hearthray
