"""The client reports of `comfort -o`, `compare -o` and `size -o`, read as a browser would first
read them.

Builds a small invented room (3 x 2.5 x 2.5 m, a window, one ceiling panel) whose panel and
named point carry hostile names ('<b>&"x', '<img src=x onerror=alert(1)>'), runs the built
tool on it, and parses each report.html with Python's html.parser: every element closed in
order (void elements aside), only the elements the writer uses (so a name never became
markup), the sections expected, each picture a data: URI whose bytes are those of the map file
written beside it, nothing fetched (no URL, no script), the hostile names present as text, the
cautions naming burns, fire, carbon monoxide, local codes, the maker's instructions and
licensed practice (the size report of electric panels: burns, anything that burns, local
codes, the maker's instructions, licensed practice), and no temporary file left.

With --browser SCRIPT it then runs scripts/check-report (chromium headless) on the comfort
report and on the size report of both layouts: each must give a screenshot that is not blank.
Exits 77 (ctest: skipped) when chromium is not installed.

usage: check_report_html.py HEARTHRAY SCRATCH_DIR OBJGEN_DIR [--browser CHECK_REPORT]
"""
import base64
import os
import shutil
import subprocess
import sys
from html.parser import HTMLParser

VOID = {"meta", "img", "br", "hr", "link", "input"}
ALLOWED = {"html", "head", "meta", "title", "style", "body", "div", "header", "h1", "h2", "p",
           "span", "ul", "ol", "li", "a", "section", "table", "caption", "thead", "tbody", "tr",
           "th", "td", "figure", "img", "figcaption", "footer"}
PANEL = '<b>&"x'
POINT = "<img src=x onerror=alert(1)>"


class Report(HTMLParser):
    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.stack, self.errors, self.tags = [], [], set()
        self.images, self.headings, self.text = [], [], []
        self._heading = None

    def handle_starttag(self, tag, attrs):
        self.tags.add(tag)
        attrs = dict(attrs)
        for name, value in attrs.items():
            if value and ("http:" in value or "https:" in value or name.startswith("on")):
                self.errors.append(f"<{tag} {name}=...> points outside or runs code")
        if tag == "img":
            self.images.append(attrs.get("src", ""))
        if tag in ("h1", "h2"):
            self._heading = []
        if tag not in VOID:
            self.stack.append(tag)

    def handle_endtag(self, tag):
        if not self.stack or self.stack[-1] != tag:
            self.errors.append(f"</{tag}> closes {self.stack[-1:] or 'nothing'}")
            return
        self.stack.pop()
        if tag in ("h1", "h2") and self._heading is not None:
            self.headings.append("".join(self._heading).strip())
            self._heading = None

    def handle_data(self, data):
        self.text.append(data)
        if self._heading is not None:
            self._heading.append(data)


def room(objgen_dir, scratch):
    sys.path.insert(0, objgen_dir)
    from objgen import Obj, gridded_box  # noqa: E402
    xs, ys, zs = [0, 1.0, 2.0, 3.0], [0, 0.8, 1.7, 2.5], [0, 0.8, 2.0, 2.5]

    def assign(side, c):
        x, y, z = c
        if side == "bottom":
            return "floor"
        if side == "top":
            return PANEL if 1.0 < x < 2.0 and 0.8 < y < 1.7 else "ceiling"
        if side == "south":
            return "window" if 1.0 < x < 2.0 and 0.8 < z < 2.0 else "walls"
        return "walls"

    o = Obj("Invented test room for the client report check.")
    o.groups(gridded_box(xs, ys, zs, assign, inward=True))
    o.write(os.path.join(scratch, "room.obj"))
    scene = f"""[mesh]
file = "room.obj"
[rays]
per_patch = 4000
seed = 2
[defaults]
emissivity = 0.9
adiabatic = true
convection = {{ h = "2.5 W/m2K", fluid = "20 C" }}
[surface.window]
wall = {{ U = "4 W/m2K", outside = "-5 C" }}
[surface.'{PANEL}']
power = "{{power}}"
[comfort]
air_temperature = "20 C"
rays = 1500
[comfort.point.'{POINT}']
position = ["1.5 m", "0.6 m", "0.6 m"]
kind = "seated"
[comfort.grid]
height = "0.6 m"
spacing = "0.5 m"
margin = "0.5 m"
"""
    for name, power in (("a", "300 W"), ("b", "500 W")):
        with open(os.path.join(scratch, f"{name}.toml"), "w") as f:
            f.write(scene.replace("{power}", power))


def run(tool, args, scratch):
    env = dict(os.environ, HEARTHRAY_CACHE=os.path.join(scratch, "cache"))
    p = subprocess.run([tool] + args, cwd=scratch, env=env, capture_output=True, text=True)
    if p.returncode != 0:
        sys.exit(f"hearthray {' '.join(args)} exited {p.returncode}:\n{p.stderr}")


WORDS = (PANEL, POINT, "burn", "Fire", "carbon monoxide", "local", "maker's instructions",
         "licensed")
# Electric panels: no flue, no combustion; the hazards are burns and fire from what is near.
SIZE_WORDS = (PANEL, POINT, "burn on contact", "anything that burns", "local electrical",
              "maker's instructions", "licensed")


def check(path, maps, want_headings, failures, words=WORDS):
    html = open(path, encoding="utf-8").read()
    r = Report()
    r.feed(html)
    r.close()
    text = " ".join(r.text)
    problems = list(r.errors)
    if r.stack:
        problems.append(f"left open: {r.stack}")
    if not html.startswith("<!DOCTYPE html>"):
        problems.append("no <!DOCTYPE html> first")
    if r.tags - ALLOWED:
        problems.append(f"elements the writer does not make: {sorted(r.tags - ALLOWED)}")
    for want in want_headings:
        if not any(want in h for h in r.headings):
            problems.append(f"no heading with '{want}' (headings: {r.headings})")
    if len(r.images) != len(maps):
        problems.append(f"{len(r.images)} pictures, expected {len(maps)}")
    for src, map_file in zip(r.images, maps):
        head = "data:image/png;base64,"
        if not src.startswith(head):
            problems.append(f"picture not embedded as a PNG data: URI: {src[:40]}")
        elif base64.b64decode(src[len(head):]) != open(map_file, "rb").read():
            problems.append(f"embedded picture differs from {map_file}")
    for word in words:
        if word not in text:
            problems.append(f"'{word}' is not in the text")
    if "<script" in html.lower() or "http:" in html or "https:" in html:
        problems.append("a script or a URL in the file")
    leftovers = [n for n in os.listdir(os.path.dirname(path)) if n.startswith(".") or "tmp" in n]
    if leftovers:
        problems.append(f"temporary files left: {leftovers}")
    print(f"{path}: {len(html)} bytes, {len(r.headings)} headings, {len(r.images)} pictures, "
          f"{len(problems)} problems")
    failures += [f"{path}: {p}" for p in problems]


def main():
    if len(sys.argv) not in (4, 6):
        sys.exit(__doc__)
    tool, scratch, objgen_dir = (os.path.abspath(a) for a in sys.argv[1:4])
    shutil.rmtree(scratch, ignore_errors=True)
    os.makedirs(scratch)
    room(objgen_dir, scratch)
    run(tool, ["comfort", "a.toml", "-q", "-o", "one"], scratch)
    run(tool, ["compare", "a.toml", "b.toml", "-o", "both"], scratch)
    run(tool, ["size", "a.toml", "b.toml", "--operative", "21", "-q", "-o", "sized"], scratch)
    kinds = ("mean_radiant", "operative", "asymmetry")
    failures = []
    one = os.path.join(scratch, "one")
    both = os.path.join(scratch, "both")
    check(os.path.join(one, "report.html"), [os.path.join(one, f"map_{k}.png") for k in kinds],
          ["Radiant comfort estimate", "At a glance", "The room: a", "Comfort: a", "Assumptions",
           "Cautions"], failures)
    check(os.path.join(both, "report.html"),
          [os.path.join(both, f"{s}_map_{k}.png") for s in "ab" for k in kinds],
          ["a against b", "Side by side", "The room: a", "The room: b", "Comfort: b",
           "Cautions"], failures)
    sized = os.path.join(scratch, "sized")
    check(os.path.join(sized, "report.html"),
          [os.path.join(sized, f"{s}_map_{k}.png") for s in "ab"
           for k in ("operative", "mean_radiant", "asymmetry")],
          ["Radiant heating plan: 2 layouts compared", "At a glance", "Power needed per layout",
           "The room: a", "Power needed and comfort: a", "The room: b",
           "Power needed and comfort: b", "Assumptions", "Cautions"], failures, SIZE_WORDS)
    for f in failures:
        print("FAILED:", f)
    if failures:
        sys.exit(1)
    if len(sys.argv) == 6 and sys.argv[4] == "--browser":
        for report, height, shot in ((os.path.join(one, "report.html"), "3400", "screenshot.png"),
                                     (os.path.join(sized, "report.html"), "7000", "sized.png")):
            p = subprocess.run(["bash", sys.argv[5], "--height", height, report,
                                os.path.join(scratch, shot)])
            if p.returncode != 0:  # 77: chromium is not installed, the test is skipped
                sys.exit(p.returncode)
        sys.exit(0)
    print("client reports parse and hold what they should")


if __name__ == "__main__":
    main()
