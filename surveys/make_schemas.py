"""Write the JSON Schemas of survey files and soil files for editors (run from anywhere).

The schemas are generated from the pydantic models that validate the files
(:mod:`subsurf.site.schema`, :mod:`subsurf.ground.schema`, :mod:`subsurf.planning.catalogue`); a test checks that the
committed files equal what this script writes, so rerun it after changing a schema.
TOML editors that read JSON Schema (e.g. taplo / "Even Better TOML") use them with a
first line ``#:schema ./survey.schema.json`` in the TOML file.
"""

from __future__ import annotations

import json
from pathlib import Path

from subsurf.ground.schema import soil_json_schema
from subsurf.planning.catalogue import catalogue_json_schema
from subsurf.site.schema import survey_json_schema

HERE = Path(__file__).resolve().parent
FILES = {"survey.schema.json": survey_json_schema, "soil.schema.json": soil_json_schema,
         "catalogue.schema.json": catalogue_json_schema}


def render(schema: dict) -> str:
    """The committed text of a schema: sorted keys, two-space indent, final newline."""
    return json.dumps(schema, indent=2, sort_keys=True, ensure_ascii=False) + "\n"


if __name__ == "__main__":
    for name, make in FILES.items():
        (HERE / name).write_text(render(make()), encoding="utf-8")
        print(f"wrote {HERE / name}")
