// The style sheet of the client report (client_report.cpp), kept apart from the writer.
#pragma once

namespace hearthray {

// Screen: a white A4-wide page on a pale ground. Print: A4, the page's margins from @page,
// headings kept with what follows, figures and verdict rows not split across pages.
inline constexpr const char* kClientReportStyle = R"(
@page { size: A4; margin: 16mm 15mm 18mm 15mm; }
* { box-sizing: border-box; }
html { background: #e9ecee; }
body { margin: 0; color: #1d2830; font: 10.5pt/1.5 "DejaVu Sans", "Liberation Sans", sans-serif;
  -webkit-print-color-adjust: exact; print-color-adjust: exact; }
.page { max-width: 210mm; margin: 8mm auto; padding: 14mm 15mm 12mm; background: #fff;
  box-shadow: 0 1px 4px rgba(29, 40, 48, 0.18); }
header { border-top: 5px solid #1f5a6b; padding-top: 6mm; margin-bottom: 6mm; }
h1, h2, h3 { font-family: "DejaVu Serif", Georgia, serif; font-weight: bold; color: #173f4c;
  break-after: avoid; page-break-after: avoid; }
h1 { font-size: 21pt; line-height: 1.2; margin: 0 0 2mm; }
.subtitle { font-size: 12pt; color: #3e4d56; margin: 0 0 3mm; }
.made-by { font-size: 8.5pt; color: #6b7780; margin: 0; letter-spacing: 0.02em; }
h2 { font-size: 14pt; margin: 9mm 0 3mm; padding-bottom: 1.5mm; border-bottom: 1px solid #cfd6da; }
h2 .number { color: #8a6a3a; margin-right: 0.5em; }
h3 { font-size: 11pt; margin: 5mm 0 2mm; }
p { margin: 0 0 2.5mm; }
.glance { background: #f6f2ea; border: 1px solid #e4dac6; border-radius: 2px; padding: 4mm 5mm;
  margin: 0 0 4mm; break-inside: avoid; page-break-inside: avoid; }
.glance h2 { margin: 0 0 2mm; border: none; padding: 0; font-size: 12pt; }
.glance ul { list-style: none; margin: 0; padding: 0; }
.glance li { margin: 0.8mm 0; padding-left: 0; }
.glance .where { color: #6b7780; font-size: 9pt; }
.mark { display: inline-block; min-width: 6.2em; font-weight: bold; font-size: 9pt;
  padding: 0 0.4em; border-radius: 2px; margin-right: 0.6em; text-align: center; }
.pass .mark { color: #fff; background: #2f6d52; }
.fail .mark { color: #fff; background: #a8401f; }
table { border-collapse: collapse; width: 100%; margin: 1mm 0 5mm; font-size: 9.5pt; }
caption { caption-side: top; text-align: left; font-size: 9.5pt; color: #3e4d56;
  padding-bottom: 1.5mm; }
caption .label, figcaption .label { font-weight: bold; color: #1d2830; }
thead { display: table-header-group; }
th { text-align: left; font-weight: bold; border-bottom: 1.5px solid #1f5a6b;
  padding: 1.2mm 2mm; vertical-align: bottom; }
td { border-bottom: 1px solid #e1e5e8; padding: 1.1mm 2mm; vertical-align: top; }
tbody tr:nth-child(even) td { background: #f7f9fa; }
tr { break-inside: avoid; page-break-inside: avoid; }
td.num, th.num { text-align: right; font-variant-numeric: tabular-nums; }
td { overflow-wrap: break-word; }
table.verdicts td.result { white-space: nowrap; }
table.verdicts td.source { color: #55626b; font-size: 8.5pt; }
figure { margin: 3mm 0 6mm; break-inside: avoid; page-break-inside: avoid; text-align: center; }
figure img { max-width: 100%; max-height: 190mm; height: auto; border: 1px solid #e1e5e8; }
figcaption { font-size: 9pt; color: #3e4d56; margin-top: 1.5mm; text-align: left; }
ol.assumptions { padding-left: 6mm; margin: 0; }
ol.assumptions li { margin: 0 0 1.5mm; }
.cautions { margin-top: 8mm; border-left: 4px solid #b8621b; background: #fbf3ea;
  padding: 3mm 5mm 2mm; break-inside: avoid; page-break-inside: avoid; }
.cautions h2 { margin: 0 0 2mm; border: none; padding: 0; color: #7a3a10; }
.cautions ul { margin: 0; padding-left: 5mm; }
.cautions li { margin: 0 0 1.8mm; }
footer { margin-top: 8mm; padding-top: 2mm; border-top: 1px solid #cfd6da; font-size: 8.5pt;
  color: #6b7780; }
@media print {
  html, body { background: #fff; }
  .page { margin: 0; padding: 0; max-width: none; box-shadow: none; }
  a { color: inherit; text-decoration: none; }
}
)";

}  // namespace hearthray
