#!/usr/bin/env python3
"""CI checks that need Python: the exported notebook is valid nbformat 4 and executes without
errors, and the demo scenarios validate against `radforce schema`.

Usage: python .ci/check_notebook.py NOTEBOOK SCHEMA.json SCENARIO.toml...
"""
import json
import os
import sys
import tomllib

import jsonschema
import nbformat
from nbclient import NotebookClient


def main():
    notebook, schema_path, scenarios = sys.argv[1], sys.argv[2], sys.argv[3:]
    nb = nbformat.read(notebook, as_version=4)
    nbformat.validate(nb)
    client = NotebookClient(nb, timeout=600, kernel_name="python3", resources={"metadata": {"path": os.path.dirname(notebook)}})
    client.execute()
    errors = [o for c in nb.cells if c.cell_type == "code" for o in c.get("outputs", []) if o.get("output_type") == "error"]
    if errors:
        sys.exit(f"notebook cells raised errors: {errors}")
    print(f"{notebook}: valid nbformat {nb.nbformat}.{nb.nbformat_minor}, {len(nb.cells)} cells executed without errors")
    with open(schema_path) as fh:
        schema = json.load(fh)
    jsonschema.Draft202012Validator.check_schema(schema)
    validator = jsonschema.Draft202012Validator(schema)
    for path in scenarios:
        with open(path, "rb") as fh:
            doc = tomllib.load(fh)
        problems = list(validator.iter_errors(doc))
        if problems:
            sys.exit(f"{path} does not validate against the schema: {problems[0].message}")
    print(f"{len(scenarios)} scenarios validate against the scenario schema")


if __name__ == "__main__":
    main()
