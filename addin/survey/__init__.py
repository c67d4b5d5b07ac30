"""groundstep.addin.survey: spectra and measures of a whole record database, resumable, failures isolated.

The engine of ``groundstep batch``: which records to run (`read_manifest`,
`scan_folder`), what to compute (`SurveySettings`, `read_settings`), the
work of one record (`run_record`), the executors (`run_survey`: this
process, a local process pool or a Dask distributed cluster) and the
outputs (one JSON per record, ``results.csv``, the combined ``spectra.csv``).
"""

from .executors import DASK_MISSING, SurveySummary, default_workers, run_survey
from .outputs import RESULTS_COLUMNS, RESULTS_FILE, ResultsManifest, read_result, result_path
from .plan import MANIFEST_COLUMNS, RecordEntry, read_manifest, result_name, scan_folder
from .settings import SETTINGS_KEYS, SurveySettings, read_settings, settings_from_mapping
from .table import TABLE_FILE, combined_rows, table_columns, write_table
from .task import MEASURE_UNITS, PLAUSIBLE_PGA, SPECTRUM_UNITS, RecordOutcome, analyse_record, record_hash, run_record

__all__ = [
    "DASK_MISSING",
    "MANIFEST_COLUMNS",
    "MEASURE_UNITS",
    "PLAUSIBLE_PGA",
    "RESULTS_COLUMNS",
    "RESULTS_FILE",
    "RecordEntry",
    "RecordOutcome",
    "ResultsManifest",
    "SETTINGS_KEYS",
    "SPECTRUM_UNITS",
    "SurveySettings",
    "SurveySummary",
    "TABLE_FILE",
    "analyse_record",
    "combined_rows",
    "default_workers",
    "read_manifest",
    "read_result",
    "read_settings",
    "record_hash",
    "result_name",
    "result_path",
    "run_record",
    "run_survey",
    "scan_folder",
    "settings_from_mapping",
    "table_columns",
    "write_table",
]
