"""The work of one record: read it, check it, compute its spectra and measures, return a small result.

`run_record` is what every executor runs (in this process, a worker process
or a Dask worker): it reads the record files itself, so only their paths
travel to the worker, and returns a `RecordOutcome` whose payload is the
record's result document (a few tens of kB). It never raises for a bad
record: the failure comes back as ``status="failed"`` with a one-line
message, so one record cannot stop a batch.
"""

from __future__ import annotations

import hashlib
import math
import time
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from groundstep.addin.common import CAUTION
from groundstep.core import (
    STANDARD_GRAVITY,
    ConvergenceError,
    Record,
    __version__,
    bandpass,
    baseline_correct,
    collect_warnings,
    ductility_spectrum,
    elastic_spectrum,
    ground_motion_measures,
)
from groundstep.core.defaults import DEFAULT_YIELDING_STEP_RATIO

from .plan import RecordEntry
from .settings import SurveySettings

__all__ = [
    "MEASURE_UNITS",
    "PLAUSIBLE_PGA",
    "RecordOutcome",
    "SPECTRUM_UNITS",
    "analyse_record",
    "one_numba_thread",
    "record_hash",
    "run_record",
]

#: Largest PGA accepted as a plausible record [m/s²]: 10 g. The largest peaks
#: recorded are a few g (from memory); a record far above is almost always
#: a unit mix-up (cm/s² values read as g give 981x), so it is refused.
PLAUSIBLE_PGA = 10.0 * STANDARD_GRAVITY

#: Units of the spectra in the result documents and the combined table (SI).
SPECTRUM_UNITS = {"sd": "m", "sv": "m/s", "sa": "m/s2", "psv": "m/s", "psa": "m/s2"}

#: Unit of each scalar of ``GroundMotionMeasures.to_dict()`` (SI, as the core returns them).
MEASURE_UNITS = {
    "pga": "m/s2", "pga_time": "s", "pgv": "m/s", "pgv_time": "s", "pgd": "m", "pgd_time": "s",
    "arias_intensity": "m/s", "d5_75": "s", "d5_75_start": "s", "d5_75_end": "s", "d5_95": "s",
    "d5_95_start": "s", "d5_95_end": "s", "cav": "m/s", "bracketed_duration": "s", "bracketed_start": "s",
    "bracketed_end": "s", "bracket_threshold": "m/s2", "mean_period": "s", "spectrum_intensity": "m",
    "predominant_period": "s",
}  # fmt: skip

#: Format of the result documents; part of every hash, so a change recomputes.
_FORMAT = "groundstep-batch-record 1"


@dataclass(frozen=True, slots=True)
class RecordOutcome:
    """What one record's task returns.

    Attributes
    ----------
    file : str
        The record's name (``RecordEntry.file``).
    status : {"done", "failed", "skipped"}
        ``skipped``: the hash equals the one of the result already written.
    message : str
        One line: a summary when done, the reason when failed.
    hash : str
        SHA-256 of the record's bytes and the settings ("" if unreadable).
    seconds : float
        Wall time of the task [s].
    payload : dict or None
        The result document when done.
    """

    file: str
    status: str
    message: str
    hash: str
    seconds: float
    payload: dict[str, Any] | None = None

    def __repr__(self) -> str:
        return f"RecordOutcome({self.file!r}, {self.status!r}, {self.message[:60]!r}, {self.seconds:.3g} s)"


def one_numba_thread() -> None:
    """Limit numba to one thread in this thread, so N worker processes share N cores."""
    import numba

    numba.set_num_threads(1)


def record_hash(entry: RecordEntry, settings: SurveySettings) -> str:
    """SHA-256 hex digest of the record's file bytes, how they are read, and the settings.

    Raises
    ------
    OSError
        A file cannot be read.
    """
    digest = hashlib.sha256()
    how = [_FORMAT, __version__, entry.file, entry.unit, repr(entry.dt), entry.dt_fallback, entry.label]
    digest.update(repr(how).encode())
    digest.update(settings.fingerprint().encode())
    for path in (entry.path, entry.path_y):
        if path is not None:
            data = _read_bytes(path)
            digest.update(f"|{len(data)}|".encode())
            digest.update(data)
    return digest.hexdigest()


def run_record(
    entry: RecordEntry, settings: SurveySettings, previous_hash: str = "", numba_threads: int | None = None
) -> RecordOutcome:
    """Run one record: skip it when `previous_hash` still matches, else analyse it; never raise for a bad record.

    Parameters
    ----------
    entry : RecordEntry
        The record.
    settings : SurveySettings
        What to compute.
    previous_hash : str, default ""
        Hash of the result already written for this record ("" if none).
    numba_threads : int, optional
        Set numba's thread count first (1 in worker processes).

    Returns
    -------
    RecordOutcome
    """
    start = time.perf_counter()
    if numba_threads is not None:
        import numba

        numba.set_num_threads(numba_threads)
    try:
        digest = record_hash(entry, settings)
    except OSError as exc:
        return RecordOutcome(entry.file, "failed", f"cannot read the record: {_one_line(exc)}", "", time.perf_counter() - start)
    if previous_hash and digest == previous_hash:
        return RecordOutcome(entry.file, "skipped", "already done with these settings", digest, time.perf_counter() - start)
    try:
        payload = analyse_record(entry, settings, digest)
    except (ValueError, TypeError, OSError, ArithmeticError, ConvergenceError) as exc:
        message = _without_name(entry.file, _one_line(exc))
        return RecordOutcome(entry.file, "failed", message, digest, time.perf_counter() - start)
    except Exception as exc:  # noqa: BLE001 - a bug must not stop the other records; it is reported as such
        message = f"internal error: {type(exc).__name__}: {_one_line(exc)}"
        return RecordOutcome(entry.file, "failed", message, digest, time.perf_counter() - start)
    seconds = time.perf_counter() - start
    first = payload["components"][0]
    summary = f"{first['samples']} samples, PGA {first['pga']:.4g} m/s2"
    return RecordOutcome(entry.file, "done", summary, digest, seconds, payload)


def analyse_record(entry: RecordEntry, settings: SurveySettings, digest: str = "") -> dict[str, Any]:
    """The result document of one record: per component its spectra, ductility spectra and measures (SI).

    Parameters
    ----------
    entry : RecordEntry
        The record (one or two component files).
    settings : SurveySettings
        What to compute.
    digest : str, optional
        The record's hash, stored in the document.

    Returns
    -------
    dict
        JSON-ready: ``file``, ``label``, ``hash``, ``settings``, ``units``,
        ``components`` (a list of dicts with ``component``, ``samples``,
        ``dt``, ``unit``, ``pga``, ``sha256``, ``processing``, ``spectra``,
        ``ductility``, ``measures``, ``warnings``), ``groundstep`` and
        ``caution``. NaN becomes ``null``.

    Raises
    ------
    ValueError, TypeError, OSError
        The record cannot be read, is not uniformly sampled, holds non-finite
        values, has no motion or an implausible PGA (`PLAUSIBLE_PGA`).
    """
    components = []
    files = [("x", entry.path)] + ([("y", entry.path_y)] if entry.path_y is not None else [])
    for component, path in files:
        with collect_warnings() as caught:
            record = _process(_read(entry, path), settings)
            _check_plausible(record)
            components.append(_component(component, record, settings))
        components[-1]["warnings"] = [_one_line(w) for w in caught]
    document = {
        "format": _FORMAT,
        "file": entry.file,
        "label": entry.label,
        "hash": digest,
        "groundstep": __version__,
        "settings": settings.to_dict(),
        "method": settings.elastic_method.name,
        "ductility_method": settings.ductility_method.name if settings.ductilities else None,
        "units": {**SPECTRUM_UNITS, "period": "s", "yield_pseudo_acceleration": "m/s2", "measures": MEASURE_UNITS},
        "components": components,
        "caution": CAUTION,
    }
    return _json_ready(document)


def _read(entry: RecordEntry, path: str) -> Record:
    name = Path(path).name
    if entry.dt is not None and entry.dt_fallback:
        try:  # a time column gives its own step; only a file without one takes the rule's dt
            return Record.from_text(path, None, entry.unit, name=name)
        except ValueError:
            pass  # the second read auto-detects the time column again, so it cannot reinterpret one
    return Record.from_text(path, entry.dt, entry.unit, name=name)


def _process(record: Record, settings: SurveySettings) -> Record:
    if settings.baseline is not None:
        record = baseline_correct(record, settings.baseline)
    if settings.bandpass is not None:
        record = bandpass(record, *settings.bandpass)
    return record


def _check_plausible(record: Record) -> None:
    pga = record.pga
    if pga == 0.0:
        raise ValueError(f"{record.name}: every sample is zero; there is no motion to analyse")
    if pga > PLAUSIBLE_PGA:
        raise ValueError(
            f"{record.name}: PGA {pga / STANDARD_GRAVITY:.4g} g is implausible (limit 10 g); "
            f"check the unit {record.unit!r} given for this record"
        )


def _component(component: str, record: Record, settings: SurveySettings) -> dict[str, Any]:
    spectrum = elastic_spectrum(
        record, settings.periods, settings.dampings, settings.method, max_step_ratio=settings.max_step_ratio
    )
    out: dict[str, Any] = {
        "component": component,
        "name": record.name,
        "samples": record.n,
        "dt": record.dt,
        "unit": record.unit,
        "pga": record.pga,
        "sha256": record.sha256(),
        "processing": [step.describe() for step in record.history],
        "spectra": {
            "periods": spectrum.periods.tolist(),
            "dampings": spectrum.dampings.tolist(),
            **{q: getattr(spectrum, q).tolist() for q in SPECTRUM_UNITS},
        },
        "ductility": None,
        "measures": None,
    }
    if settings.ductilities:
        ductility = ductility_spectrum(
            record, settings.periods, settings.ductilities, settings.ductility_damping, settings.ductility_method,
            hardening=settings.hardening, max_step_ratio=_yielding_ratio(settings.max_step_ratio),
        )  # fmt: skip
        out["ductility"] = {
            "damping": ductility.damping,
            "hardening": ductility.hardening,
            "ductilities": ductility.ductilities.tolist(),
            "yield_coefficient": ductility.yield_coefficient.tolist(),
            "reduction_factor": ductility.reduction_factor.tolist(),
            "yield_pseudo_acceleration": ductility.yield_pseudo_acceleration.tolist(),
        }
    if settings.measures:
        out["measures"] = ground_motion_measures(record).to_dict()
    return out


def _yielding_ratio(ratio: float | None) -> float | None:
    """The survey's step ratio, at most the yielding default (1 % accuracy, ``core.defaults``); None stays off."""
    return None if ratio is None else min(float(ratio), DEFAULT_YIELDING_STEP_RATIO)


def _json_ready(value: Any) -> Any:
    """Plain floats, NaN and infinities as None (JSON has no NaN)."""
    if isinstance(value, dict):
        return {key: _json_ready(item) for key, item in value.items()}
    if isinstance(value, (list, tuple)):
        return [_json_ready(item) for item in value]
    if isinstance(value, float):
        return value if math.isfinite(value) else None
    if hasattr(value, "item"):  # numpy scalar
        return _json_ready(value.item())
    return value


def _read_bytes(path: str) -> bytes:
    with open(path, "rb") as handle:
        return handle.read()


def _one_line(item: BaseException | Warning) -> str:
    text = str(item).strip()
    return text.splitlines()[0] if text else type(item).__name__


def _without_name(file: str, message: str) -> str:
    """A reader's message without the record's own file name in front: the outcome names the file already."""
    prefix = f"{Path(file).name}: "
    return message[len(prefix) :] if message.startswith(prefix) else message
