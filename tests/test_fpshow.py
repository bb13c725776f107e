"""`elbowroom footprints`: the list, one footprint's pads, the picture, unknown names (exit 2)."""
import json

import pytest
from PIL import Image

from router.cli import main
from router.footprints import builtin_footprint
from router.fpshow import FAMILIES, footprint_table


def test_list_names_every_family(capsys):
    assert main(["footprints"]) == 0
    out = capsys.readouterr().out
    for pattern, _, example, _ in FAMILIES:
        assert pattern in out and example in out
        assert builtin_footprint(example) is not None
    assert main(["footprints", "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert {f["example"] for f in data["families"]} == {f[2] for f in FAMILIES}
    qfn = next(f for f in data["families"] if f["example"] == "qfn-32-0.5-ep")
    assert qfn["pins"] == 33


def test_pads_as_json_match_the_footprint(capsys):
    assert main(["footprints", "sot-223", "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    fp = builtin_footprint("sot-223")
    assert data == footprint_table(fp)
    assert [p["pin"] for p in data["pads"]] == ["1", "2", "3", "4"]
    # JEDEC TO-261AA: leads 2.3 mm apart
    assert data["pads"][1]["offset"][0] - data["pads"][0]["offset"][0] == pytest.approx(2.3)
    assert all(p["drill"] is None for p in data["pads"])


def test_pads_as_text(capsys):
    assert main(["footprints", "to-92"]) == 0
    out = capsys.readouterr().out
    lines = [ln.split() for ln in out.splitlines() if ln.strip()[:1].isdigit()]
    # pin, x, y, shape, w, h, drill: three plated pads 1.27 mm apart (JEDEC TO-226AA)
    assert [ln[0] for ln in lines] == ["1", "2", "3"]
    assert [float(ln[1]) for ln in lines] == [-1.27, 0.0, 1.27]
    assert all(ln[6] == "0.7" for ln in lines)


def test_picture_written(tmp_path, capsys):
    out = tmp_path / "q.png"
    assert main(["footprints", "qfn-32-0.5-ep", "-o", str(out)]) == 0
    assert "wrote" in capsys.readouterr().out
    with Image.open(out) as im:
        assert im.size[0] > 400 and im.size[1] > 400
    svg = tmp_path / "s.svg"
    assert main(["footprints", "switch-6x6", "-o", str(svg), "-q"]) == 0
    text = svg.read_text()
    assert text.lstrip().startswith("<?xml") and "<svg" in text
    # the pin numbers are in the picture as text (matplotlib writes glyphs as paths with ids; the
    # number of pads drawn is at least the footprint's pad count)
    assert text.count("<path") >= len(builtin_footprint("switch-6x6").pads)


@pytest.mark.parametrize("name,near", [("qfn-33-0.5", "qfn-32-0.5"), ("sot23-5", "sot-23-5"),
                                       ("tssop-15", "tssop-14"), ("crystal-hc-49", "crystal-hc49")])
def test_unknown_name_exit_2_with_the_nearest(name, near, capsys):
    assert main(["footprints", name]) == 2
    err = capsys.readouterr().err
    assert len(err.strip().splitlines()) == 1
    assert name in err and near in err


def test_bad_picture_type_writes_nothing(tmp_path, capsys):
    out = tmp_path / "q.jpg"
    assert main(["footprints", "sot-89", "-o", str(out)]) == 2
    assert not out.exists() and list(tmp_path.iterdir()) == []
    assert main(["footprints", "-o", str(tmp_path / "a.png")]) == 2
    assert list(tmp_path.iterdir()) == []
