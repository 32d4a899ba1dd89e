// The client report as one HTML file (hearthray/client_report.hpp). Pictures go in as data:
// URIs in <img>: a PNG as it is, an SVG as well (not inline), because Cairo names the parts of
// every SVG it writes alike ("glyph0-1", "clip1"), and two such SVGs inline in one page would
// take each other's glyphs.
#include "hearthray/client_report.hpp"

#include <algorithm>
#include <cctype>
#include <fstream>
#include <sstream>

#include "core/text.hpp"
#include "hearthray/error.hpp"
#include "hearthray/version.hpp"
#include "outputs/atomic_file.hpp"
#include "outputs/client_report_style.hpp"

namespace hearthray {

namespace {

namespace fs = std::filesystem;

std::string base64(const std::string& bytes) {
  static const char* kDigits = "ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/";
  std::string out;
  out.reserve((bytes.size() + 2) / 3 * 4);
  std::size_t i = 0;
  for (; i + 2 < bytes.size(); i += 3) {
    const unsigned v = unsigned((unsigned char)bytes[i]) << 16 |
                       unsigned((unsigned char)bytes[i + 1]) << 8 | (unsigned char)bytes[i + 2];
    for (int shift : {18, 12, 6, 0}) out += kDigits[(v >> shift) & 63];
  }
  if (const std::size_t left = bytes.size() - i) {
    unsigned v = unsigned((unsigned char)bytes[i]) << 16;
    if (left == 2) v |= unsigned((unsigned char)bytes[i + 1]) << 8;
    out += kDigits[(v >> 18) & 63];
    out += kDigits[(v >> 12) & 63];
    out += left == 2 ? kDigits[(v >> 6) & 63] : '=';
    out += '=';
  }
  return out;
}

std::string lower_extension(const fs::path& p) {
  std::string e = p.extension().string();
  std::transform(e.begin(), e.end(), e.begin(), [](unsigned char c) { return std::tolower(c); });
  return e;
}

// The figure's file as a data: URI; refuses what is not a PNG or an SVG.
std::string image_uri(const fs::path& image) {
  std::ifstream in(image, std::ios::binary);
  if (!fs::is_regular_file(image) || !in)
    throw InputError("client report: cannot read the figure '" + image.string() + "'");
  std::ostringstream bytes;
  bytes << in.rdbuf();
  const std::string data = bytes.str();
  const std::string extension = lower_extension(image);
  if (extension == ".png") {
    if (data.compare(0, 8, "\x89PNG\r\n\x1a\n") != 0)
      throw InputError("client report: the figure '" + image.string() + "' is not a PNG file");
    return "data:image/png;base64," + base64(data);
  }
  if (extension == ".svg") {
    if (data.find("<svg") == std::string::npos)
      throw InputError("client report: the figure '" + image.string() + "' is not an SVG file");
    return "data:image/svg+xml;base64," + base64(data);
  }
  throw InputError("client report: the figure '" + image.string() +
                   "' must be a .png or .svg file");
}

// A cell holding a number (possibly with a sign, a range or a unit after it) is set right-
// aligned in tabular figures.
bool looks_numeric(const std::string& cell) {
  std::size_t i = 0;
  if (cell.compare(0, 3, "\u2212") == 0)
    i = 3;  // true minus sign
  else if (!cell.empty() && (cell[0] == '-' || cell[0] == '+'))
    i = 1;
  return i < cell.size() && std::isdigit((unsigned char)cell[i]);
}

struct Counters {
  int table = 0, figure = 0;
};

// Columns (after the first) whose every filled cell is a number are set right-aligned, their
// heading too.
std::vector<bool> numeric_columns(const ReportTable& t, std::size_t columns) {
  std::vector<bool> numeric(columns, false);
  for (std::size_t c = 1; c < columns; ++c) {
    bool any = false, all = true;
    for (const auto& row : t.rows) {
      if (c >= row.size() || row[c].empty()) continue;
      any = true;
      all = all && looks_numeric(row[c]);
    }
    numeric[c] = any && all;
  }
  return numeric;
}

void write_table(std::ostream& out, const ReportTable& t, Counters* n) {
  std::size_t columns = t.header.size();
  for (const auto& row : t.rows) columns = std::max(columns, row.size());
  const std::vector<bool> numeric = numeric_columns(t, columns);
  auto cell = [&](const char* tag, std::size_t c, const std::string& text) {
    out << "<" << tag << (numeric[c] ? " class=\"num\">" : ">") << markup_escape(text) << "</"
        << tag << ">";
  };
  out << "<table>\n";
  if (!t.caption.empty())
    out << "<caption><span class=\"label\">Table " << ++n->table << ".</span> "
        << markup_escape(t.caption) << "</caption>\n";
  if (!t.header.empty()) {
    out << "<thead><tr>";
    for (std::size_t c = 0; c < columns; ++c) cell("th", c, c < t.header.size() ? t.header[c] : "");
    out << "</tr></thead>\n";
  }
  out << "<tbody>\n";
  for (const auto& row : t.rows) {
    out << "<tr>";
    for (std::size_t c = 0; c < columns; ++c) cell("td", c, c < row.size() ? row[c] : "");
    out << "</tr>\n";
  }
  out << "</tbody></table>\n";
}

const char* mark(bool pass) {
  return pass ? "&#10003; met" : "&#10007; not met";
}

void write_verdicts(std::ostream& out, const std::vector<ReportVerdict>& verdicts) {
  out << "<table class=\"verdicts\">\n<thead><tr><th>Check</th><th>Result</th><th>Detail</th>"
         "<th>Source</th></tr></thead>\n<tbody>\n";
  for (const ReportVerdict& v : verdicts)
    out << "<tr class=\"" << (v.pass ? "pass" : "fail") << "\"><td>" << markup_escape(v.what)
        << "</td><td class=\"result\"><span class=\"mark\">" << mark(v.pass) << "</span></td><td>"
        << markup_escape(v.detail) << "</td><td class=\"source\">" << markup_escape(v.source)
        << "</td></tr>\n";
  out << "</tbody></table>\n";
}

void write_figure(std::ostream& out, const ReportFigure& f, Counters* n) {
  const int number = ++n->figure;
  out << "<figure><img src=\"" << image_uri(f.image) << "\" alt=\"Figure " << number;
  if (!f.caption.empty()) out << ": " << markup_escape(f.caption);
  out << "\">\n<figcaption><span class=\"label\">Figure " << number << ".</span> "
      << markup_escape(f.caption) << "</figcaption></figure>\n";
}

void write_section(std::ostream& out, const ReportSection& s, std::size_t index, Counters* n) {
  out << "<section id=\"s" << index + 1 << "\">\n<h2><span class=\"number\">" << index + 1
      << "</span>" << markup_escape(s.heading) << "</h2>\n";
  for (const std::string& p : s.paragraphs) out << "<p>" << markup_escape(p) << "</p>\n";
  if (!s.verdicts.empty()) write_verdicts(out, s.verdicts);
  for (const ReportTable& t : s.tables) write_table(out, t, n);
  for (const ReportFigure& f : s.figures) write_figure(out, f, n);
  out << "</section>\n";
}

// Every verdict of every section in one short list, before the sections.
void write_glance(std::ostream& out, const ClientReport& r) {
  std::ostringstream items;
  for (std::size_t k = 0; k < r.sections.size(); ++k)
    for (const ReportVerdict& v : r.sections[k].verdicts)
      items << "<li class=\"" << (v.pass ? "pass" : "fail") << "\"><span class=\"mark\">"
            << mark(v.pass) << "</span>" << markup_escape(v.what) << " <a class=\"where\" href=\"#s"
            << k + 1 << "\">(section " << k + 1 << ")</a></li>\n";
  if (items.str().empty()) return;
  out << "<div class=\"glance\">\n<h2>At a glance</h2>\n<ul>\n" << items.str() << "</ul>\n</div>\n";
}

// What the terminal says in ASCII, as the report says it: "20.5 C" becomes "20.5 °C" with a
// no-break space (a digit, a space, C, then no letter), so that no line breaks before the unit.
std::string degrees(std::string text) {
  for (std::size_t at = text.find(" C"); at != std::string::npos; at = text.find(" C", at + 1)) {
    const bool number = at > 0 && std::isdigit(static_cast<unsigned char>(text[at - 1]));
    const bool word_ends =
        at + 2 == text.size() || !std::isalpha(static_cast<unsigned char>(text[at + 2]));
    if (number && word_ends) text.replace(at, 2, "\u00a0\u00b0C");
  }
  return text;
}

// Every text of the report with its temperatures in degrees Celsius (degrees above).
ClientReport with_degrees(ClientReport r) {
  r.title = degrees(r.title);
  r.subtitle = degrees(r.subtitle);
  for (ReportSection& s : r.sections) {
    s.heading = degrees(s.heading);
    for (std::string& p : s.paragraphs) p = degrees(p);
    for (ReportTable& t : s.tables) {
      t.caption = degrees(t.caption);
      for (std::string& h : t.header) h = degrees(h);
      for (auto& row : t.rows)
        for (std::string& cell : row) cell = degrees(cell);
    }
    for (ReportVerdict& v : s.verdicts)
      v.what = degrees(v.what), v.detail = degrees(v.detail), v.source = degrees(v.source);
    for (ReportFigure& f : s.figures) f.caption = degrees(f.caption);
  }
  for (std::string& a : r.assumptions) a = degrees(a);
  for (std::string& c : r.cautions) c = degrees(c);
  return r;
}

}  // namespace

std::string client_report_html(const ClientReport& report) {
  const ClientReport r = with_degrees(report);
  std::ostringstream out;
  out << "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n"
      << "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n"
      << "<title>" << markup_escape(r.title) << "</title>\n<style>" << kClientReportStyle
      << "</style>\n</head>\n<body>\n<div class=\"page\">\n<header>\n<h1>" << markup_escape(r.title)
      << "</h1>\n";
  if (!r.subtitle.empty()) out << "<p class=\"subtitle\">" << markup_escape(r.subtitle) << "</p>\n";
  out << "<p class=\"made-by\">Engineering estimate made with hearthray " << kVersion
      << "</p>\n</header>\n";
  write_glance(out, r);
  Counters n;
  for (std::size_t k = 0; k < r.sections.size(); ++k) write_section(out, r.sections[k], k, &n);
  if (!r.assumptions.empty()) {
    out << "<section id=\"assumptions\">\n<h2>Assumptions</h2>\n<ol class=\"assumptions\">\n";
    for (const std::string& a : r.assumptions) out << "<li>" << markup_escape(a) << "</li>\n";
    out << "</ol>\n</section>\n";
  }
  if (!r.cautions.empty()) {
    out << "<section id=\"cautions\" class=\"cautions\">\n<h2>Cautions</h2>\n<ul>\n";
    for (const std::string& c : r.cautions) out << "<li>" << markup_escape(c) << "</li>\n";
    out << "</ul>\n</section>\n";
  }
  out << "<footer>hearthray " << kVersion
      << ". The figures in this report are estimates from a model; they do not replace a site "
         "survey, local codes, the maker's instructions or licensed practice.</footer>\n"
      << "</div>\n</body>\n</html>\n";
  return out.str();
}

void write_client_report(const ClientReport& report, const fs::path& html) {
  const std::string text = client_report_html(report);  // reads the figures; may throw
  write_stream_atomically(html.string(), [&](std::ostream& out) { out << text; });
}

}  // namespace hearthray
