"""Executes a notebook top to bottom with a fresh Python kernel; fails (exit 1) if a cell fails.

Usage: python3 .ci/run_notebook.py NOTEBOOK [--write]   (--write keeps the outputs in the file)
"""

import pathlib
import sys

import nbclient
import nbformat


def main() -> int:
    path = pathlib.Path(sys.argv[1])
    notebook = nbformat.read(path, as_version=4)
    client = nbclient.NotebookClient(
        notebook, timeout=600, kernel_name="python3", resources={"metadata": {"path": str(path.parent)}}
    )
    try:
        client.execute()
    except nbclient.exceptions.CellExecutionError as err:
        print(f"{path}: a cell failed:\n{err}", file=sys.stderr)
        return 1
    if "--write" in sys.argv[2:]:
        nbformat.write(notebook, path)
    n_cells = sum(1 for c in notebook.cells if c.cell_type == "code")
    print(f"{path}: {n_cells} code cells ran without error")
    return 0


if __name__ == "__main__":
    sys.exit(main())
