"""The API tour notebook (docs/notebooks/tour.ipynb) runs end to end as a user would run it."""

from __future__ import annotations

from pathlib import Path

import pytest

nbformat = pytest.importorskip("nbformat")
nbclient = pytest.importorskip("nbclient")
pytest.importorskip("ipykernel")

NOTEBOOK = Path(__file__).resolve().parents[1] / "docs" / "notebooks" / "tour.ipynb"


def test_tour_notebook_executes_without_errors():
    """Every cell runs; the cells that print show the recommendation and a depth with its sd."""
    nb = nbformat.read(NOTEBOOK, as_version=4)
    nbclient.NotebookClient(nb, timeout=240, kernel_name="python3",
                            resources={"metadata": {"path": str(NOTEBOOK.parent)}}).execute()
    text = "\n".join(out.get("text", "") for cell in nb.cells if cell.cell_type == "code"
                     for out in cell.get("outputs", []))
    assert "recommended:" in text and "depth " in text and "±" in text
