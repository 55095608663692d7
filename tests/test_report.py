"""The one-page report: PDF and PNG written atomically, an A4 page, the caution present."""

from __future__ import annotations

import os
import re

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

import pytest  # noqa: E402
from PySide6.QtGui import QImage  # noqa: E402

from app.report import PAGE_PX, chassis_lines, export_report, report_bytes  # noqa: E402
from kinematics.analysis.report_text import CAUTION  # noqa: E402
from kinematics.errors import SwatheInputError  # noqa: E402
from kinematics.files.floorplan import Door, FloorPlan, Obstacle, Wall  # noqa: E402
from kinematics.files.project import Chassis, Project, Route, Waypoint  # noqa: E402


def small_project() -> Project:
    """An invented store room with a door and a crate in one route's way."""
    walls = (Wall(((0, 0), (12, 0), (12, 6), (0, 6), (0, 0)), 0.2),
             Wall(((6, 0), (6, 2.5)), 0.15), Wall(((6, 3.5), (6, 6)), 0.15))
    obstacles = (Obstacle(((8.0, 1.2), (9.0, 1.2), (9.0, 1.9), (8.0, 1.9)), "crate"),)
    fp = FloorPlan("test store room", walls, obstacles, (Door((6.0, 2.5), (6.0, 3.5), "D-1"),))
    chassis = Chassis(name="test tug", drive="differential", track_m=0.5,
                      max_wheel_rate_radps=12.0)
    routes = (Route("through-door", (Waypoint(1.5, 3.0), Waypoint(10.5, 3.0))),
              Route("into-crate", (Waypoint(7.0, 1.5), Waypoint(10.5, 1.5))))
    return Project(fp, chassis, routes)


def test_pdf_is_written_and_starts_with_the_pdf_header(qapp, tmp_path):
    out = tmp_path / "r.pdf"
    export_report(small_project(), out)
    data = out.read_bytes()
    # Source: ISO 32000-1:2008 (PDF 1.7), clause 7.5.2: a file begins with "%PDF-1.n"
    # and (7.5.5) ends with "%%EOF".
    assert data.startswith(b"%PDF-1.")
    assert data.rstrip().endswith(b"%%EOF")
    assert len(data) > 5000
    # One page: exactly one page object. Source: ISO 32000-1, 7.7.3.3 (a page object has
    # /Type /Page; the page tree nodes have /Type /Pages).
    assert len(re.findall(rb"/Type\s*/Page(?!s)", data)) == 1
    assert not list(tmp_path.glob(".*tmp")), "the temporary file of the atomic write remains"


def test_pdf_text_carries_the_caution(qapp, tmp_path):
    # Source: pypdf (a general-purpose PDF library) reads the text back; NFKC folds the
    # typographic ligatures (fi, fl) a font may set, as Unicode's compatibility mapping says.
    import unicodedata

    import pypdf

    out = tmp_path / "r.pdf"
    export_report(small_project(), out)
    text = " ".join(p.extract_text() for p in pypdf.PdfReader(str(out)).pages)
    flat = " ".join(unicodedata.normalize("NFKC", text).split())
    assert " ".join(CAUTION.split()) in flat
    assert "through-door" in flat


def test_png_is_an_a4_page(qapp, tmp_path):
    out = tmp_path / "r.png"
    export_report(small_project(), out, route_name="into-crate")
    img = QImage(str(out))
    # Source: ISO 216, A4 is 210 mm x 297 mm; at 150 dpi that is 1240 x 1754 pixels.
    assert (img.width(), img.height()) == PAGE_PX == (1240, 1754)
    # Not a blank page: a good share of the pixels carry ink.
    inked = sum(1 for x in range(0, img.width(), 8) for y in range(0, img.height(), 8)
                if img.pixelColor(x, y).lightness() < 200)
    assert inked > 800


def test_report_fixed_time_is_deterministic(qapp):
    a = report_bytes(small_project(), "png", when="2000-01-01 00:00")
    b = report_bytes(small_project(), "png", when="2000-01-01 00:00")
    assert a == b


def test_bad_suffix_and_missing_folder_are_input_errors(qapp, tmp_path):
    with pytest.raises(SwatheInputError):
        export_report(small_project(), tmp_path / "r.docx")
    with pytest.raises(SwatheInputError):
        export_report(small_project(), tmp_path / "no" / "such" / "r.pdf")


def test_chassis_summary_names_the_dimensions():
    rows = dict(chassis_lines(small_project().chassis))
    assert rows["Drive"] == "differential"
    assert rows["Track"] == "0.500 m"
    # The default footprint spans x -0.3..0.6 and y -0.3..0.3: 0.9 m long, 0.6 m wide.
    assert rows["Footprint"].startswith("0.900 m long x 0.600 m wide")
    assert "wheel rate 12.0 rad/s" in rows["Limits"]
