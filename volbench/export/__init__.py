"""Pricing-sheet exports: CSV, XLSX and JSON files, and tab-separated text for the clipboard.

Typical use::

    settings = Settings(estimation=EstimationSettings(window=20),
                        option=OptionSettings(pricing_vol=0.25, days=30))
    bundle = build_bundle(histories, settings)
    write_export("pricing.xlsx", bundle)            # refuses to replace an existing file
    text = table_to_tsv(bundle.table("estimates"))  # paste into a spreadsheet

The estimates table follows a documented, stable schema (:mod:`volbench.export.schema`,
``docs/EXPORT_SCHEMA.md``). Every write is atomic (:func:`atomic_write`).
"""

from volbench.export.atomic import atomic_write, check_destination
from volbench.export.bundle import SECTIONS, TABLE_ORDER, ExportBundle, build_bundle
from volbench.export.schema import ESTIMATES_COLUMNS, ESTIMATES_SCHEMA, SCHEMA_VERSION
from volbench.export.sections import SectionStatus
from volbench.export.tsv import table_to_tsv
from volbench.export.writers import (
    FORMATS,
    csv_text,
    export_format,
    json_document,
    write_csv,
    write_export,
    write_json,
    write_xlsx,
)

__all__ = [
    "ESTIMATES_COLUMNS",
    "ESTIMATES_SCHEMA",
    "FORMATS",
    "SCHEMA_VERSION",
    "SECTIONS",
    "TABLE_ORDER",
    "ExportBundle",
    "SectionStatus",
    "atomic_write",
    "build_bundle",
    "check_destination",
    "csv_text",
    "export_format",
    "json_document",
    "table_to_tsv",
    "write_csv",
    "write_export",
    "write_json",
    "write_xlsx",
]
