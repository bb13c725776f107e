"""The interactive page: self-contained, well-formed, one group per net, and working in headless Chromium."""
import glob
import html
import json
import os
import re
import shutil
import subprocess
import urllib.parse
import xml.etree.ElementTree as ET
from html.parser import HTMLParser
from pathlib import Path

import pytest

from router.boardfile import load_board, loads_board
from router.check import check
from router.page import page_figures, page_html, write_page

from test_draw import HAND, JUMPERED

BOARDS = sorted(glob.glob(str(Path(__file__).resolve().parent.parent / "boards" / "*.toml")))
SVG_NS = "{http://www.w3.org/2000/svg}"

# A net name with every character that needs escaping in HTML, in attributes and in a script.
ODD = 'Q<&"\'> </script><b>'
ODD_BOARD = HAND.replace('name = "B"', 'name = ' + json.dumps(ODD))


class Tags(HTMLParser):
    """Every start tag with its attributes, and the text of each <script>."""

    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.tags = []
        self.scripts = []
        self._in_script = False

    def handle_starttag(self, tag, attrs):
        self.tags.append((tag, dict(attrs)))
        if tag == "script":
            self._in_script = True
            self.scripts.append("")

    def handle_startendtag(self, tag, attrs):
        self.tags.append((tag, dict(attrs)))

    def handle_endtag(self, tag):
        if tag == "script":
            self._in_script = False

    def handle_data(self, data):
        if self._in_script:
            self.scripts[-1] += data


def parse(text):
    p = Tags()
    p.feed(text)
    p.close()
    return p


def svg_of(text):
    start = text.index('<svg id="board"')
    return ET.fromstring(text[start:text.index("</svg>", start) + len("</svg>")])


def all_boards():
    return [load_board(p) for p in BOARDS] + [loads_board(HAND), loads_board(JUMPERED), loads_board(ODD_BOARD)]


# ---------------------------------------------------------------- structure

@pytest.mark.parametrize("k", range(len(BOARDS) + 3))
def test_page_is_self_contained(k):
    board = all_boards()[k]
    text = page_html(board, check(board))
    p = parse(text)
    fetch_attrs = ("src", "href", "xlink:href", "action", "data", "poster", "srcset")
    for tag, attrs in p.tags:
        assert tag not in ("link", "iframe", "img", "object", "embed", "base"), tag
        for a in fetch_attrs:
            v = (attrs.get(a) or "").strip().lower()
            # common practice: anything but an in-page reference (#id) or nothing would be fetched
            assert v == "" or v.startswith("#"), (tag, a, v)
        assert not (tag == "script" and "src" in attrs)
    assert "@import" not in text
    assert not re.search(r"url\(\s*['\"]?(https?:)?//", text)
    assert not re.search(r"\bfetch\(|XMLHttpRequest|import\(", text)


@pytest.mark.parametrize("k", range(len(BOARDS) + 3))
def test_every_net_has_its_group(k):
    board = all_boards()[k]
    text = page_html(board)
    p = parse(text)
    groups = {a["data-net"] for t, a in p.tags if t == "g" and "data-net" in a}
    assert {n.name for n in board.nets} <= groups
    # the SVG is well-formed XML (ElementTree) and holds the same groups
    root = svg_of(text)
    xml_groups = {g.get("data-net") for g in root.iter(SVG_NS + "g") if g.get("data-net") is not None}
    assert xml_groups == groups
    # the embedded data is JSON and names every net
    data = json.loads(next(s for t, s in zip([t for t, a in p.tags if t == "script"], p.scripts)
                           if s.lstrip().startswith("{")))
    assert {n["name"] for n in data["figures"]["nets"]} == {n.name for n in board.nets}


def test_odd_names_are_escaped():
    text = page_html(loads_board(ODD_BOARD))
    # only the page's own two scripts close; the name's "</script>" is escaped in the JSON and the SVG
    assert text.count("</script>") == 2
    assert text.count("<b>") == 0
    p = parse(text)
    assert any(a.get("data-net") == ODD for t, a in p.tags if t == "g")
    assert any(a.get("data-net") == ODD for t, a in p.tags if t == "li")


def test_hand_board_svg_is_the_file_geometry():
    board = loads_board(HAND)
    root = svg_of(page_html(board))
    flip = next(g for g in root.iter(SVG_NS + "g") if g.get("id") == "flip")
    assert flip.get("transform") == "scale(1,-1)"
    # viewBox (x, -y1 - m, w, h) covers the board turned over: every outline corner (x, -y) inside
    vx, vy, vw, vh = map(float, root.get("viewBox").split())
    for x, y in board.outline:
        assert vx <= x <= vx + vw and vy <= -y <= vy + vh
    layer = {g.get("data-layer"): g for g in root.iter(SVG_NS + "g") if g.get("data-layer")}
    lines = {}
    for name in ("top", "bottom"):
        g = next(g for g in layer[name] if g.get("data-net") == "A")
        (pl,) = g.iter(SVG_NS + "polyline")
        lines[name] = (pl.get("points"), float(pl.get("stroke-width")), pl.get("stroke-linecap"))
    # the traces of the file, as written in HAND
    assert lines["top"] == ("4.92,5 12,5", 0.25, "round")
    assert lines["bottom"] == ("12,5 15.08,5", 0.25, "round")
    # one via in A's plated group: a disc of the via diameter and its drill
    g = next(g for g in layer["plated"] if g.get("data-net") == "A")
    discs = sorted(float(c.get("r")) for c in g.iter(SVG_NS + "circle")
                   if (c.get("cx"), c.get("cy")) == ("12", "5"))
    assert discs == [0.2, 0.4]
    # the unrouted B and C each have their line; A has none
    un = {g.get("data-net"): len(list(g.iter(SVG_NS + "line"))) for g in layer["unrouted"]}
    assert un.get("A", 0) == 0 and un["B"] == 1 and un["C"] == 1


def test_figures_on_the_page():
    board = loads_board(HAND)
    p = parse(page_html(board))
    data = json.loads(next(s for s in p.scripts if s.lstrip().startswith("{")))
    a = next(n for n in data["figures"]["nets"] if n["name"] == "A")
    # hand computed: 12 - 4.92 + 15.08 - 12 = 10.16 mm, one via, no jumpers; A is routed, B is not
    assert a["length"] == pytest.approx(10.16, abs=1e-6)
    assert (a["vias"], a["jumpers"], a["routed"]) == (1, 0, True)
    assert not next(n for n in data["figures"]["nets"] if n["name"] == "B")["routed"]


def test_local_figures_without_the_figures_module(monkeypatch):
    import builtins
    real = builtins.__import__

    def no_figures(name, globals=None, locals=None, fromlist=(), level=0):
        if name == "figures" and level == 1 or name == "router.figures":
            raise ImportError("no figures here")
        return real(name, globals, locals, fromlist, level)

    monkeypatch.setattr(builtins, "__import__", no_figures)
    figs = page_figures(loads_board(JUMPERED))
    (w,) = figs["nets"]
    # hand computed: two bottom traces of 3 mm each; the jumper wire is not length (the contract)
    assert w["length"] == pytest.approx(6.0, abs=1e-9)
    assert (w["jumpers"], w["vias"], w["routed"], w["bends"]) == (1, 0, True, None)


def test_write_page_is_atomic(tmp_path, monkeypatch):
    out = tmp_path / "b.html"
    write_page(loads_board(HAND), out)
    first = out.read_text(encoding="utf-8")
    assert first.startswith("<!DOCTYPE html>")
    import router.page as page

    def broken(*a, **k):
        raise RuntimeError("failed half-way")

    monkeypatch.setattr(page, "_svg", broken)
    with pytest.raises(RuntimeError):
        write_page(loads_board(HAND), out)
    assert out.read_text(encoding="utf-8") == first
    assert sorted(p.name for p in tmp_path.iterdir()) == ["b.html"]


# ---------------------------------------------------------------- in headless Chromium

def chromium():
    exe = shutil.which("chromium")
    if exe is None:
        if os.environ.get("ELBOWROOM_REQUIRE_BROWSER"):
            pytest.fail("ELBOWROOM_REQUIRE_BROWSER is set but chromium is not installed "
                        "(apt-get install chromium)")
        pytest.skip("chromium is not installed (.ci/run installs it)")
    return exe


def dump_dom(exe, url, tmp_path):
    """The DOM after the page's scripts ran, as headless Chromium serialises it."""
    cmd = [exe, "--headless", "--no-sandbox", "--disable-gpu", "--no-first-run", "--disable-extensions",
           f"--user-data-dir={tmp_path / 'profile'}", "--window-size=1200,800", "--dump-dom", url]
    # the timeout only keeps a hung browser from hanging the suite; nothing here is timed
    run = subprocess.run(cmd, capture_output=True, text=True, timeout=120)
    assert run.returncode == 0, run.stderr[-2000:]
    assert "</html>" in run.stdout, run.stderr[-2000:]
    return run.stdout


def net_classes(dom, name):
    """The class attribute of every <g data-net=name> in a dumped DOM."""
    p = parse(dom)
    return [a.get("class", "") for t, a in p.tags if t == "g" and a.get("data-net") == name]


def test_chromium_highlights_the_net_of_the_address(tmp_path):
    exe = chromium()
    board = loads_board(ODD_BOARD)
    page = write_page(board, tmp_path / "odd.html")
    url = page.as_uri() + "#net=" + urllib.parse.quote(ODD, safe="")
    dom = dump_dom(exe, url, tmp_path)
    p = parse(dom)
    body = next(a for t, a in p.tags if t == "body")
    assert body.get("data-highlighted") == ODD
    assert net_classes(dom, ODD) and all("hl" in c.split() for c in net_classes(dom, ODD))
    for other in ("A", "C"):
        assert not any("hl" in c.split() for c in net_classes(dom, other))
    svg = next(a for t, a in p.tags if t == "svg")
    assert "focus" in svg.get("class", "").split()
    m = re.search(r'<h2 id="info-name">(.*?)</h2>', dom, re.S)
    assert m and html.unescape(m.group(1)) == ODD


PROBE = r"""<script>
(function () {
  var out = {};
  function netEl(name) {
    var gs = document.querySelectorAll("#board g[data-net]");
    for (var i = 0; i < gs.length; i++) {
      if (gs[i].getAttribute("data-net") === name && gs[i].firstElementChild) return gs[i].firstElementChild;
    }
    return null;
  }
  function hl(name) {
    var gs = document.querySelectorAll("#board g[data-net]"), all = true, n = 0;
    for (var i = 0; i < gs.length; i++) {
      if (gs[i].getAttribute("data-net") === name) { n++; all = all && gs[i].classList.contains("hl"); }
    }
    return n > 0 && all;
  }
  netEl("B").dispatchEvent(new MouseEvent("mouseover", {bubbles: true}));
  out.hover = document.body.getAttribute("data-highlighted");
  out.hover_hl = hl("B");
  out.hover_info = document.getElementById("info-name").textContent;
  netEl("B").dispatchEvent(new MouseEvent("mouseout", {bubbles: true, relatedTarget: document.body}));
  out.after_out = document.body.getAttribute("data-highlighted");
  netEl("A").dispatchEvent(new MouseEvent("click", {bubbles: true}));
  out.click = document.body.getAttribute("data-highlighted");
  out.click_hl = hl("A") && !hl("B");
  out.click_info = document.getElementById("info-name").textContent;
  out.hash = decodeURIComponent(location.hash);
  var box = document.querySelector('input[data-toggle="top"]');
  box.click();
  out.top_hidden = document.querySelector('#board g[data-layer="top"]').style.display;
  box.click();
  out.top_shown = document.querySelector('#board g[data-layer="top"]').style.display;
  var svg = document.getElementById("board");
  var before = svg.getAttribute("viewBox").split(" ").map(Number);
  var r = svg.getBoundingClientRect();
  svg.dispatchEvent(new WheelEvent("wheel", {bubbles: true, cancelable: true, deltaY: -400,
                                             clientX: r.left + r.width / 2, clientY: r.top + r.height / 2}));
  var after = svg.getAttribute("viewBox").split(" ").map(Number);
  out.zoom = after[2] / before[2];
  var pre = document.createElement("pre");
  pre.id = "probe";
  pre.textContent = JSON.stringify(out);
  document.body.appendChild(pre);
}());
</script>
</body>"""


def test_chromium_hover_click_toggle_and_zoom(tmp_path):
    exe = chromium()
    text = page_html(loads_board(HAND))
    assert text.count("</body>") == 1
    probe = tmp_path / "probe.html"
    probe.write_text(text.replace("</body>", PROBE), encoding="utf-8")
    dom = dump_dom(exe, probe.as_uri(), tmp_path)
    m = re.search(r'<pre id="probe">(.*?)</pre>', dom, re.S)
    assert m, dom[-2000:]
    out = json.loads(html.unescape(m.group(1)))
    assert out["hover"] == "B" and out["hover_hl"] and out["hover_info"] == "B"
    assert out["after_out"] == ""                 # nothing pinned: leaving the net clears it
    assert out["click"] == "A" and out["click_hl"] and out["click_info"] == "A"
    assert out["hash"] == "#net=A"
    assert out["top_hidden"] == "none" and out["top_shown"] == ""
    # 1.0015 ** -400 (the page's zoom step per wheel unit): hand computed 0.5489...
    assert out["zoom"] == pytest.approx(1.0015 ** -400, rel=1e-4)


# ---------------------------------------------------------------- readable words, the pin under the pointer

def _svg_texts(svg, cls):
    return [el for el in svg.iter("{http://www.w3.org/2000/svg}text") if el.get("class") == cls]


def test_page_refs_off_the_pads_ticks_and_pin_attributes():
    # the refs as written on the page, boxes from their place and size (router.labels' estimate,
    # which over-states a capital's width), against the pads as shapely shapes
    from shapely.geometry import box
    from router.geometry import pad_shape, placed_pads
    from router.labels import text_size
    board = loads_board(HAND)
    svg = svg_of(page_html(board))
    refs = _svg_texts(svg, "ref")
    assert sorted(el.text for el in refs) == sorted(p.ref for p in board.parts)
    pads = [pad_shape(p) for p in placed_pads(board)]
    for el in refs:
        x, y, h = float(el.get("x")), -float(el.get("y")), float(el.get("font-size"))
        w, _ = text_size(el.text, h)
        assert not any(p.intersects(box(x - w / 2, y - h / 2, x + w / 2, y + h / 2)) for p in pads), el.text
    ticks = [el.text for g in svg.iter("{http://www.w3.org/2000/svg}g") if g.get("class") == "ticks"
             for el in g.iter("{http://www.w3.org/2000/svg}text")]
    assert "0" in ticks and len(ticks) >= 4
    pins = {(el.get("data-part"), el.get("data-pin"), el.get("data-pad-net")) for el in svg.iter()
            if el.get("data-pin") is not None}
    assert pins == {(p.ref, p.pin, p.net) for p in placed_pads(board)}


def test_page_violation_numbers_and_net_names():
    board = loads_board(HAND)
    vs = check(board)
    located = [v for v in vs if v.at is not None]
    text = page_html(board, vs, labels="nets")
    svg = svg_of(text)
    nums = _svg_texts(svg, "violation-number")
    assert [el.text for el in nums] == [str(k) for k in range(1, len(located) + 1)]
    assert len(re.findall(r'<li data-number="\d+">', text)) == len(located)
    names = {el.text for el in _svg_texts(svg, "net-name")}
    long_nets = {t.net for t in board.traces for a, b in zip(t.points, t.points[1:])
                 if abs(a[0] - b[0]) + abs(a[1] - b[1]) >= 7.0}      # HAND: net A's 7.08 mm segment
    assert long_nets == {"A"} and long_nets <= names
    assert not _svg_texts(svg_of(page_html(board, vs)), "net-name")


PIN_PROBE = r"""<script>
(function () {
  var pad = document.querySelector('[data-part="R1"][data-pin="2"]');
  pad.dispatchEvent(new MouseEvent("mouseover", {bubbles: true}));
  var pre = document.createElement("pre");
  pre.id = "probe";
  pre.textContent = document.getElementById("pin").textContent;
  document.body.appendChild(pre);
}());
</script>
</body>"""


def test_chromium_shows_the_pin_under_the_pointer(tmp_path):
    exe = chromium()
    text = page_html(loads_board(HAND))
    probe = tmp_path / "pin.html"
    probe.write_text(text.replace("</body>", PIN_PROBE), encoding="utf-8")
    dom = dump_dom(exe, probe.as_uri(), tmp_path)
    m = re.search(r'<pre id="probe">(.*?)</pre>', dom, re.S)
    assert m, dom[-2000:]
    net = next(n.name for n in loads_board(HAND).nets if "R1.2" in n.pins)
    assert html.unescape(m.group(1)) == f"part R1, pin 2, net {net}"
