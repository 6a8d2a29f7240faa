"""The one figure style: every figure module uses it, no pyplot global state, PNGs at the style's size."""

from __future__ import annotations

import ast
import struct
from pathlib import Path

import numpy as np

PACKAGE = Path(__file__).resolve().parents[2] / "subsurf"


def _png_size(data: bytes) -> tuple[int, int]:
    """Width and height from the IHDR chunk (PNG specification, ISO/IEC 15948 §11.2.2)."""
    assert data[:8] == b"\x89PNG\r\n\x1a\n"
    return struct.unpack(">II", data[16:24])


def test_no_module_uses_pyplot_and_every_figure_module_uses_the_style():
    """No subsurf module imports matplotlib.pyplot; each io/fig_*.py imports io/figstyle."""
    for path in sorted(PACKAGE.rglob("*.py")):
        tree = ast.parse(path.read_text(encoding="utf-8"))
        names = set()
        for node in ast.walk(tree):
            if isinstance(node, ast.Import):
                names |= {a.name for a in node.names}
            elif isinstance(node, ast.ImportFrom):
                names.add(("." * node.level) + (node.module or ""))
        assert "matplotlib.pyplot" not in names, path
        if path.parent.name == "io" and path.name.startswith("fig_"):
            assert ".figstyle" in names, f"{path.name} does not use subsurf.io.figstyle"


def test_png_has_figure_size_times_dpi():
    """A figure of w × h inches is written at figstyle.DPI: (w·DPI) × (h·DPI) pixels."""
    from subsurf.io import figstyle

    fig = figstyle.new_figure(4.0, 3.0, layout=None)
    fig.add_subplot().plot([0, 1], [0, 1])
    assert _png_size(figstyle.png_bytes(fig)) == (4 * figstyle.DPI, 3 * figstyle.DPI)


def test_figures_leave_global_matplotlib_state_alone():
    """Drawing a report figure changes neither the global rcParams nor the backend (re-entrant, no display)."""
    import matplotlib as mpl

    from subsurf.io.fig_report import time_depth_png

    before = dict(mpl.rcParams)
    backend = mpl.get_backend()
    t = np.linspace(0, 50e-9, 20)
    png = time_depth_png(t, 0.05e9 * t, 0.045e9 * t, 0.055e9 * t, velocity_text="v = 0.1 m/ns")
    assert _png_size(png)[0] > 0
    assert mpl.get_backend() == backend
    assert {k: v for k, v in mpl.rcParams.items() if before.get(k) != v} == {}


def test_style_fonts_and_sizes_reach_the_artists():
    """Axis labels and titles drawn under the style carry its font family and sizes."""
    from subsurf.io import figstyle

    @figstyle.styled
    def draw():
        fig = figstyle.new_figure(3.0, 2.0)
        ax = fig.add_subplot()
        ax.set_title("t")
        ax.set_xlabel("x")
        figstyle.style_axes(ax)
        return fig, ax

    fig, ax = draw()
    assert ax.title.get_fontsize() == figstyle.SIZES["title"]
    assert ax.xaxis.label.get_fontsize() == figstyle.SIZES["label"]
    assert ax.title.get_fontfamily()[0] == "DejaVu Sans"
    assert ax.spines["top"].get_visible() is False
