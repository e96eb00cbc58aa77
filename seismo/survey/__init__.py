"""Many stars: inputs, executors, a resumable results ledger and catalogs.

Public names
------------
run_survey        Analyse every star of a survey, resumably → `SurveySummary`.
SurveySummary     Counts by status and state, slowest stars, failure reasons.
summarize_ledger  The summary of an existing ledger.
collect_stars     Folder / text list / inputs table → list of `StarTask`.
StarTask          One star: path, optional id, `StarInputs`.
load_config       TOML file → `AnalysisConfig`.
analyze_one       The per-star function (picklable, never raises).
star_seed         Per-star seed from the run seed and the file checksum.
SerialExecutor    Jobs one by one in this process.
LocalExecutor     Worker processes with a per-star time limit.
DaskExecutor      A Dask distributed cluster (optional dependency seismo[dask]).
StarRecord        One row of the ledger.
MemoryLedger      Ledger in memory (tests).
SQLiteLedger      Ledger in an SQLite file (WAL mode).
open_ledger       The SQLite ledger of a survey folder.
write_catalog     Ledger → catalog file (.ecsv, .fits, .csv, .parquet) + failures.
catalog_tables    Ledger records → (stars QTable, failures Table).
"""

from .catalog import CATALOG_FORMATS, catalog_tables, failed_path, write_catalog
from .executors import (
    DaskExecutor,
    Job,
    LocalExecutor,
    SerialExecutor,
    StarTimeoutError,
    WorkerLostError,
    analyze_one,
    star_seed,
)
from .inputs import StarTask, collect_stars, load_config
from .ledger import (
    LEDGER_NAME,
    STATUSES,
    Ledger,
    MemoryLedger,
    SQLiteLedger,
    StarRecord,
    open_ledger,
)
from .runner import CORE_HELIUM_UNKNOWN, SurveySummary, plan_survey, run_survey, summarize_ledger

__all__ = [
    "run_survey", "SurveySummary", "summarize_ledger", "plan_survey", "collect_stars",
    "CORE_HELIUM_UNKNOWN",
    "StarTask", "load_config", "analyze_one", "star_seed", "Job", "SerialExecutor", "LocalExecutor",
    "DaskExecutor", "StarTimeoutError", "WorkerLostError", "StarRecord", "Ledger",
    "MemoryLedger", "SQLiteLedger", "open_ledger", "LEDGER_NAME", "STATUSES",
    "write_catalog", "catalog_tables", "failed_path", "CATALOG_FORMATS",
]
