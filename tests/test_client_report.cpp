// The client report (hearthray/client_report.hpp): plain text escaped (hostile names appear as
// written, never as markup), pictures embedded byte for byte (decoded here by a decoder of the
// test's own, against the files), no scripts and nothing fetched, figures that are not PNG or
// SVG refused without leaving a file, and the same bytes on every run. The HTML is parsed by
// Python's html.parser in the ctest `client-report-html` (tests/python/check_report_html.py),
// on the reports of `comfort -o` and `compare -o`.
#include <catch2/catch.hpp>
#include <filesystem>
#include <string>

#include "core/text.hpp"
#include "hearthray/client_report.hpp"
#include "hearthray/error.hpp"
#include "hearthray/picture.hpp"
#include "support/cli_run.hpp"

using namespace hearthray;
using namespace hearthray::testing;

namespace {

// Base64 (RFC 4648, section 4) decoded independently of the writer's encoder.
std::string decode_base64(const std::string& text) {
  const std::string digits = "ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/";
  std::string out;
  unsigned bits = 0;
  int count = 0;
  for (const char c : text) {
    if (c == '=') break;
    const std::size_t v = digits.find(c);
    REQUIRE(v != std::string::npos);
    bits = (bits << 6) | unsigned(v);
    count += 6;
    if (count >= 8) {
      count -= 8;
      out += char((bits >> count) & 0xff);
    }
  }
  return out;
}

// The payload of the n-th data: URI of `kind` ("image/png") in `html`.
std::string data_uri(const std::string& html, const std::string& kind, int n) {
  const std::string head = "src=\"data:" + kind + ";base64,";
  std::size_t at = 0;
  for (int k = 0; k <= n; ++k) {
    at = html.find(head, at);
    REQUIRE(at != std::string::npos);
    at += head.size();
  }
  return html.substr(at, html.find('"', at) - at);
}

ClientReport sample_report(const ScratchDir& dir) {
  Image image;
  image.width = 3;
  image.height = 2;
  image.rgb = {255, 0, 0, 0, 255, 0, 0, 0, 255, 10, 20, 30, 40, 50, 60, 70, 80, 90};
  write_png((dir / "tiny.png").string(), image);
  write_text(dir / "tiny.svg",
             "<?xml version=\"1.0\"?>\n<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"20\" "
             "height=\"10\"><rect width=\"20\" height=\"10\" fill=\"#123456\"/></svg>\n");
  ClientReport r;
  r.title = "Room <script>alert(1)</script>";
  r.subtitle = "layout \"A\" & 'B'";
  ReportSection s;
  s.heading = "Comfort at <b>the sofa</b>";
  s.paragraphs = {"first & second", std::string("bell\x07here")};
  s.tables.push_back(
      {"points", {"name", "t_o (C)"}, {{"<img src=x onerror=alert(1)>", "21.3"}, {"short row"}}});
  s.figures.push_back({"a map", dir / "tiny.png"});
  s.figures.push_back({"a drawing", dir / "tiny.svg"});
  s.verdicts.push_back({"asymmetry at <desk>", true, "3.1 K < 5 K", "ISO 7730 (recalled)"});
  s.verdicts.push_back({"floor", false, "31 C > 29 C", "ASHRAE 55"});
  r.sections.push_back(s);
  r.sections.push_back({"Second", {"text"}, {}, {}, {}});
  r.assumptions = {"steady state"};
  r.cautions = {"hot panels: burns & fire"};
  return r;
}

}  // namespace

TEST_CASE("client report escapes every text it is given", "[client-report]") {
  ScratchDir dir("client-report-escape");
  const std::string html = client_report_html(sample_report(dir));
  CHECK(html.find("<script") == std::string::npos);
  CHECK(html.find("<b>the sofa") == std::string::npos);
  CHECK(html.find("<img src=x") == std::string::npos);
  CHECK(html.find("<desk>") == std::string::npos);
  CHECK_THAT(html, Catch::Contains("Room &lt;script&gt;alert(1)&lt;/script&gt;"));
  CHECK_THAT(html, Catch::Contains("layout &quot;A&quot; &amp; &#39;B&#39;"));
  CHECK_THAT(html, Catch::Contains("&lt;img src=x onerror=alert(1)&gt;"));
  CHECK_THAT(html, Catch::Contains("bell\xEF\xBF\xBDhere"));  // BEL is not allowed in HTML
  CHECK(html.find('\x07') == std::string::npos);
  // The one escape of the library (core/text.hpp), shared with the VTU writer.
  CHECK(markup_escape("a<b>&\"'\tc\n") == "a&lt;b&gt;&amp;&quot;&#39;\tc\n");
  CHECK(markup_escape("\x01\x7f\xC3\xA9") == "\xEF\xBF\xBD\xEF\xBF\xBD\xC3\xA9");  // UTF-8 kept
}

// Every report (the heating plan's, the comfort report's, the comparison's) shows the
// terminal's "63 C" as "63 °C" with a no-break space, in every kind of text; "C" not after a
// number, or starting a word, stays as it is. (Own case, no source.)
TEST_CASE("client report writes temperatures in degrees Celsius", "[client-report]") {
  ClientReport r;
  r.title = "Plan at 20 C";
  r.cautions = {"window (glass) is near heat: panel_1 at 0.50 m (63 C); keep the clearance.",
                "Class C fittings at 5 Celsius and 3 Cm"};
  ReportSection s;
  s.heading = "Room";
  s.tables.push_back({"table at 21.5 C", {"point", "T"}, {{"desk", "19.0 C"}}});
  s.verdicts.push_back({"floor under 29 C", true, "24.0 C against 29 C", "EN 1264 (recalled)"});
  r.sections.push_back(s);
  const std::string html = client_report_html(r);
  const std::string deg = "\u00a0\u00b0C";
  for (const std::string& expected : {"Plan at 20" + deg, "(63" + deg + ")", "table at 21.5" + deg,
                                      "19.0" + deg, "24.0" + deg + " against 29" + deg})
    CHECK_THAT(html, Catch::Contains(expected));
  CHECK_THAT(html, Catch::Contains("Class C fittings at 5 Celsius and 3 Cm"));
  CHECK_THAT(html, !Catch::Contains("63 C"));
}

TEST_CASE("client report embeds its pictures and fetches nothing", "[client-report]") {
  ScratchDir dir("client-report-embed");
  const std::string html = client_report_html(sample_report(dir));
  CHECK(decode_base64(data_uri(html, "image/png", 0)) == slurp(dir / "tiny.png"));
  CHECK(decode_base64(data_uri(html, "image/svg+xml", 0)) == slurp(dir / "tiny.svg"));
  // Nothing outside the file: no scripts, no links or sources by URL, no @import.
  for (const char* outside : {"<script", "http:", "https:", "<link", "@import", "src=\"/"})
    CHECK(html.find(outside) == std::string::npos);
  // The parts in order: the verdicts at a glance, sections, assumptions, cautions last.
  const std::size_t glance = html.find("At a glance"), first = html.find("id=\"s1\""),
                    second = html.find("id=\"s2\""), assumptions = html.find("Assumptions"),
                    cautions = html.find("id=\"cautions\"");
  CHECK(glance < first);
  CHECK(first < second);
  CHECK(second < assumptions);
  CHECK(assumptions < cautions);
  CHECK(cautions != std::string::npos);
  CHECK_THAT(html, Catch::Contains("&#10003; met") && Catch::Contains("&#10007; not met"));
  CHECK_THAT(html, Catch::Contains("Figure 2.") && Catch::Contains("Table 1."));
  // A4 when printed.
  CHECK_THAT(html, Catch::Contains("@page { size: A4"));
}

TEST_CASE("client report is written whole and refuses what it cannot embed", "[client-report]") {
  ScratchDir dir("client-report-write");
  ClientReport r = sample_report(dir);
  write_client_report(r, dir / "report.html");
  CHECK(slurp(dir / "report.html") == client_report_html(r));
  std::size_t files = 0;
  for (const auto& entry : std::filesystem::directory_iterator(dir.path())) {
    (void)entry;
    ++files;
  }
  CHECK(files == 3);  // tiny.png, tiny.svg, report.html: no temporary left behind

  write_text(dir / "fake.png", "GIF89a not a png");
  write_text(dir / "picture.gif", "GIF89a");
  for (const char* bad : {"fake.png", "picture.gif", "missing.png"}) {
    ClientReport broken = r;
    broken.sections[1].figures.push_back({"bad", dir / bad});
    try {
      write_client_report(broken, dir / "broken.html");
      FAIL("a bad figure was accepted: " << bad);
    } catch (const InputError& e) {
      CHECK_THAT(e.what(), Catch::Contains(bad));
    }
    CHECK_FALSE(std::filesystem::exists(dir / "broken.html"));
  }
  // The same report, the same bytes.
  CHECK(client_report_html(r) == client_report_html(sample_report(dir)));
}

TEST_CASE("lists of names read as sentences", "[client-report]") {
  // Common practice in English prose, no source.
  CHECK(join_and({}).empty());
  CHECK(join_and({"a"}) == "a");
  CHECK(join_and({"a", "b"}) == "a and b");
  CHECK(join_and({"a", "b", "c"}) == "a, b and c");
}
