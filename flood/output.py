"""Writing result tables to files atomically (.csv, .xlsx, .json), chosen by the file's extension.

A file is written to a temporary name in the target folder and renamed into place only when
complete, so a failed run never leaves a half-written or empty file behind.
"""

from __future__ import annotations

import json
import os
import tempfile
from pathlib import Path

import pandas as pd

from .errors import FloodInputError

SUPPORTED_EXTENSIONS = (".csv", ".xlsx", ".json")


def check_output_path(path) -> Path:
    """Validate an output path's extension and folder before any work is done."""
    path = Path(path)
    if path.suffix.lower() not in SUPPORTED_EXTENSIONS:
        raise FloodInputError("-o", str(path), "a file name ending in .csv, .xlsx or .json")
    folder = path.parent if str(path.parent) else Path(".")
    if not folder.is_dir():
        raise FloodInputError("-o", str(path), "a path in an existing folder")
    return path


def table_bytes(kind: str, sheets: dict[str, pd.DataFrame], main: str) -> bytes:
    """Serialise ``sheets`` (name -> DataFrame) as CSV/JSON (the ``main`` sheet) or XLSX (all sheets)."""
    if kind == ".csv":
        return sheets[main].to_csv(index=False).encode("utf-8")
    if kind == ".json":
        payload = {name: df.to_dict(orient="records") for name, df in sheets.items()}
        return json.dumps(payload, indent=1, allow_nan=False, default=float).encode("utf-8")
    import io

    buf = io.BytesIO()
    with pd.ExcelWriter(buf, engine="openpyxl") as xl:
        for name, df in sheets.items():
            df.to_excel(xl, sheet_name=name[:31], index=False)
    return buf.getvalue()


def write_atomic(path, data: bytes) -> None:
    """Write ``data`` to ``path`` via a temporary file and an atomic rename."""
    path = Path(path)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".part", dir=path.parent or ".")
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
        os.replace(tmp, path)
    except BaseException:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        raise


def write_tables(path, sheets: dict[str, pd.DataFrame], main: str) -> None:
    """Write result tables to ``path`` by its extension, atomically."""
    path = check_output_path(path)
    write_atomic(path, table_bytes(path.suffix.lower(), sheets, main))
