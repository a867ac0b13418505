"""Results on disk: parts committed whole or not at all, and the final Parquet tables.

Layout of an output folder::

    OUT/parts/<part>.bands.parquet        band rows of the structures of one part
    OUT/parts/<part>.structures.parquet   their structure rows (written last: the commit)
    OUT/structures.parquet                one row per structure of the run, input order
    OUT/bands.parquet                     one row per structure, unit and band

Every file is written to a temporary name and renamed (:mod:`splitting._io`).  A part
counts as committed when its structure file exists; a band file without it is left over
from an interrupted write and is ignored (and overwritten when the part is done again).
The final tables are assembled from the committed parts, so they can always be rebuilt.
"""

from __future__ import annotations

import json
import os
from collections.abc import Sequence
from pathlib import Path
from typing import Any

import pyarrow as pa
import pyarrow.parquet as pq

from .._io import atomic_write_bytes
from ..errors import InputError
from .work import Row

__all__ = ["BANDS", "METADATA_KEY", "STRUCTURES", "PartStore", "read_metadata"]

METADATA_KEY = b"splitting"

_s, _i, _b = pa.string(), pa.int32(), pa.bool_()
_list = pa.list_(pa.string())

#: Schema of the structure table.
STRUCTURES = pa.schema(
    [
        ("path", _s),
        ("name", _s),
        ("key", _s),
        ("ok", _b),
        ("error_kind", _s),
        ("error", _s),
        ("formula", _s),
        ("space_group", _s),
        ("space_group_number", _i),
        ("factor_group", _s),
        ("centrosymmetric", _b),
        ("atoms_input", _i),
        ("atoms_primitive", _i),
        ("units", _i),
        ("unit_names", _list),
        ("site_groups", _list),
        ("wyckoffs", _list),
        ("lowest_molecular_site_order", _i),
        ("ir", _i),
        ("raman", _i),
        ("silent", _i),
        ("ins", _i),
        ("polar", _i),
        ("optical", _i),
        ("warnings", _list),
        ("seconds", pa.float64()),
    ]
)

#: Schema of the band table.
BANDS = pa.schema(
    [
        ("path", _s),
        ("name", _s),
        ("key", _s),
        ("unit_index", _i),
        ("unit", _s),
        ("unit_formula", _s),
        ("unit_common_name", _s),
        ("unit_kind", _s),
        ("count", _i),
        ("wyckoff", _s),
        ("site_symmetry", _s),
        ("site_group", _s),
        ("site_order", _i),
        ("free_group", _s),
        ("free_order", _i),
        ("factor_group", _s),
        ("band_kind", _s),
        ("band", _s),
        ("band_dimension", _i),
        ("modes", _i),
        ("site_components", _s),
        ("factor_components", _s),
        ("ir", _i),
        ("raman", _i),
        ("silent", _i),
        ("ins", _i),
    ]
)

_STRUCT_END = ".structures.parquet"
_BAND_END = ".bands.parquet"


def _table_bytes(table: pa.Table) -> bytes:
    sink = pa.BufferOutputStream()
    pq.write_table(table, sink, compression="zstd")
    return sink.getvalue().to_pybytes()


def _with_metadata(schema: pa.Schema, metadata: dict[str, Any]) -> pa.Schema:
    return schema.with_metadata({METADATA_KEY: json.dumps(metadata, sort_keys=True).encode()})


def read_metadata(path: str | os.PathLike[str]) -> dict[str, Any]:
    """The run description stored in a Parquet file written here (options, version, ...).

    Raises
    ------
    InputError
        The file is missing, not Parquet, or was not written by ``splitting``.
    """
    try:
        meta = pq.read_schema(path).metadata or {}
    except (OSError, pa.ArrowInvalid) as exc:
        what = "cannot be read" if isinstance(exc, OSError) and not isinstance(exc, pa.ArrowInvalid) else "damaged"
        raise InputError(f"{path}: not a Parquet file that 'splitting screen' wrote (it is {what})") from None
    if METADATA_KEY not in meta:
        raise InputError(f"{path}: not a table written by splitting screen (no run description)")
    return json.loads(meta[METADATA_KEY])


class PartStore:
    """The parts folder of one output folder.

    Parameters
    ----------
    folder : path
        The output folder (created if missing; its parent must exist).
    metadata : dict
        Run description written into every part and table.
    """

    def __init__(self, folder: str | os.PathLike[str], metadata: dict[str, Any]) -> None:
        self.folder = Path(folder)
        self.parts = self.folder / "parts"
        self.metadata = metadata
        try:
            if self.folder.exists() and not self.folder.is_dir():
                raise InputError(f"{self.folder}: exists and is not a folder")
            if not self.folder.parent.is_dir():
                raise InputError(f"cannot write {self.folder}: folder {self.folder.parent} does not exist")
            self.parts.mkdir(parents=True, exist_ok=True)
        except OSError as exc:  # a read-only file system, a name too long, no permission
            from .._io import output_error

            raise output_error(self.folder, exc) from None

    def _committed_files(self) -> list[Path]:
        return sorted(self.parts.glob("*" + _STRUCT_END))

    def committed_keys(self) -> set[str]:
        """Keys of every structure in a committed part."""
        files = self._committed_files()
        if not files:
            return set()
        return set(_read(files, STRUCTURES, columns=["key"]).column("key").to_pylist())

    def commit(self, part: str, rows: Sequence[Row], bands: Sequence[Row]) -> None:
        """Write one part: band rows first, then the structure rows (the commit)."""
        meta = {**self.metadata, "table": "part"}
        atomic_write_bytes(
            self.parts / (part + _BAND_END),
            _table_bytes(pa.Table.from_pylist(list(bands), schema=_with_metadata(BANDS, meta))),
        )
        atomic_write_bytes(
            self.parts / (part + _STRUCT_END),
            _table_bytes(pa.Table.from_pylist(list(rows), schema=_with_metadata(STRUCTURES, meta))),
        )

    def assemble(self, inputs: Sequence[tuple[str, str]], metadata: dict[str, Any]) -> tuple[Path, Path]:
        """Write the final tables for ``inputs`` (``(path, key)`` in order) from the committed parts.

        A structure whose content appears under several names gets a row under each name.
        """
        import pandas as pd

        files = self._committed_files()
        order = pd.DataFrame({"_order": range(len(inputs)), "path": [p for p, _ in inputs]})
        order["key"] = [k for _, k in inputs]
        order["name"] = [os.path.basename(p) for p, _ in inputs]
        if files:
            rows = _read(files, STRUCTURES).to_pandas().drop_duplicates("key")
            bands = _read([f.with_name(f.name[: -len(_STRUCT_END)] + _BAND_END) for f in files], BANDS).to_pandas()
        else:
            rows = STRUCTURES.empty_table().to_pandas()
            bands = BANDS.empty_table().to_pandas()
        rows = rows.rename(columns={"path": "_stored"}).drop(columns=["name"])
        table = order.merge(rows, on="key", how="inner", validate="many_to_one").sort_values("_order", kind="stable")
        moved = table["error"].notna() & (table["_stored"] != table["path"])
        table.loc[moved, "error"] = [
            e.replace(old, new)
            for e, old, new in zip(table["error"][moved], table["_stored"][moved], table["path"][moved], strict=True)
        ]
        bands = bands.drop(columns=["path", "name"]).drop_duplicates()
        bands["_seq"] = range(len(bands))
        band_table = order.merge(bands, on="key", how="inner").sort_values(["_order", "_seq"], kind="stable")
        meta_s = {**metadata, "table": "structures"}
        meta_b = {**metadata, "table": "bands"}
        out_s = self.folder / "structures.parquet"
        out_b = self.folder / "bands.parquet"
        atomic_write_bytes(out_b, _table_bytes(_from_pandas(band_table, _with_metadata(BANDS, meta_b))))
        atomic_write_bytes(out_s, _table_bytes(_from_pandas(table, _with_metadata(STRUCTURES, meta_s))))
        return out_s, out_b


def _from_pandas(df, schema: pa.Schema) -> pa.Table:
    return pa.Table.from_pandas(df[schema.names], schema=schema, preserve_index=False)


def _read(files: Sequence[Path], schema: pa.Schema, *, columns: list[str] | None = None) -> pa.Table:
    import pyarrow.dataset as ds

    return ds.dataset([os.fspath(f) for f in files], format="parquet", schema=schema).to_table(columns=columns)
