"""Checks of written output files by independent readers (pandas, csvw, pyogrio), shared by the CLI tests."""

from __future__ import annotations

import json
from pathlib import Path

from subsurf.safety import CAUTION


def assert_plain_csv(path) -> None:
    """``path`` opens with ``pandas.read_csv`` and no options; its CSVW metadata names every column; the
    declared numbers read as numbers; the caution is on every row and in the metadata; the csvw package
    (an independent W3C CSVW implementation) validates it when installed."""
    import pandas as pd

    path = Path(path)
    df = pd.read_csv(path)
    meta = json.loads(path.with_name(path.name + "-metadata.json").read_text(encoding="utf-8"))
    assert "http://www.w3.org/ns/csvw" in meta["@context"], path
    assert meta["url"] == path.name
    cols = meta["tableSchema"]["columns"]
    assert [c["name"] for c in cols] == list(df.columns), path
    assert len(df) > 0, path
    for c in cols:
        if c["datatype"] in ("number", "integer"):
            assert df[c["name"]].dtype.kind in "fi", (path, c["name"], df[c["name"]].dtype)
    assert (df["caution"] == CAUTION).all(), path
    assert CAUTION in meta["dc:description"]
    try:
        import csvw
    except ImportError:
        print(f"csvw not installed: CSVW validation of {path.name} skipped")
        return
    doc = csvw.CSVW(str(path.resolve()), validate=True)
    assert doc.is_valid, (path, doc.warnings)
    assert len(list(doc.tables[0].iterdicts())) == len(df)
