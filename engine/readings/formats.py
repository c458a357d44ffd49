"""File readers: WAV, CSV, NumPy .npy/.npz and UFF type 58.

Each reader returns ``RawReading``: arrays in the file's own unit plus
whatever metadata the file itself states. ``load_reading`` merges that with
the sidecar and the caller's options and converts to SI.
"""

from __future__ import annotations

import csv
import io
import warnings
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from ..errors import ReadingError

TIME_COLUMNS = ("time_s", "time", "t")
UNIFORM_SPACING_TOLERANCE = 0.01  # time stamps may jitter by 1 % of the sample interval
UFF_DIRECTIONS = {1: "x", 2: "y", 3: "z"}


@dataclass
class RawReading:
    names: list[str]
    arrays: list[np.ndarray]
    fs_hz: float | None = None
    units: list[str | None] = field(default_factory=list)
    full_scale: float | None = None     # digital full scale, in the arrays' own units
    points: list[str | None] = field(default_factory=list)
    meta: dict = field(default_factory=dict)


def read_wav(path: str) -> RawReading:
    """PCM 8/16/24/32-bit or float WAV; integers are normalised to +-1 full scale."""
    from scipy.io import wavfile

    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", wavfile.WavFileWarning)
            fs, data = wavfile.read(path)
    except (ValueError, EOFError, OSError) as exc:
        raise ReadingError(f"not a readable WAV file ({exc})", path=path) from None
    if data.dtype == np.uint8:
        x, full_scale = (data.astype(float) - 128.0) / 128.0, 1.0
    elif np.issubdtype(data.dtype, np.integer):
        # scipy returns 24-bit samples left-justified in int32, so one divisor fits both.
        bits = 8 * data.dtype.itemsize
        x, full_scale = data.astype(float) / 2.0 ** (bits - 1), 1.0
    else:
        x, full_scale = data.astype(float), None
    x = x.reshape(len(x), -1)
    names = [f"ch{i + 1}" for i in range(x.shape[1])]
    return RawReading(names, [x[:, i] for i in range(x.shape[1])], float(fs),
                      full_scale=full_scale)


def read_csv(path: str) -> RawReading:
    """CSV with ``# key: value`` header lines, a row of column names, then numbers.

    The sample rate comes from ``# sample_rate_hz:`` or from a time column
    (``time_s``, ``time`` or ``t``, in seconds) that must be uniformly spaced.
    """
    try:
        text = Path(path).read_text(encoding="utf-8")
    except UnicodeDecodeError:
        raise ReadingError("not a text CSV file", path=path) from None
    meta, body, first_body_line = {}, [], None
    for lineno, line in enumerate(text.splitlines(), start=1):
        stripped = line.strip()
        if not stripped:
            continue
        if stripped.startswith("#"):
            key, sep, value = stripped.lstrip("#").partition(":")
            if sep:
                meta[key.strip()] = value.strip()
            continue
        if first_body_line is None:
            first_body_line = lineno
        body.append((lineno, line))
    if not body:
        raise ReadingError("the CSV file holds no data rows", path=path)
    rows = list(csv.reader(io.StringIO("\n".join(line for _, line in body))))
    header = [c.strip() for c in rows[0]]
    if all(_is_number(c) for c in header):
        header, data_rows, line_numbers = [f"ch{i + 1}" for i in range(len(rows[0]))], rows, [n for n, _ in body]
    else:
        data_rows, line_numbers = rows[1:], [n for n, _ in body[1:]]
    values = np.empty((len(data_rows), len(header)))
    for r, (row, lineno) in enumerate(zip(data_rows, line_numbers)):
        if len(row) != len(header):
            raise ReadingError(f"expected {len(header)} columns, got {len(row)}", path=path, line=lineno)
        try:
            values[r] = [float(c) for c in row]
        except ValueError:
            raise ReadingError(f"not a number in {row!r}", path=path, line=lineno) from None
    if len(values) == 0:
        raise ReadingError("the CSV file holds no data rows", path=path)
    fs = float(meta["sample_rate_hz"]) if _is_number(meta.get("sample_rate_hz", "")) else None
    lowered = [h.lower() for h in header]
    time_col = next((lowered.index(t) for t in TIME_COLUMNS if t in lowered), None)
    if time_col is not None:
        t = values[:, time_col]
        dt = np.diff(t)
        if len(dt) == 0 or not np.all(dt > 0):
            raise ReadingError(f"time column {header[time_col]!r} must increase", path=path)
        step = float(np.median(dt))
        if np.max(np.abs(dt - step)) > UNIFORM_SPACING_TOLERANCE * step:
            raise ReadingError(f"time column {header[time_col]!r} is not uniformly spaced", path=path)
        fs = fs or 1.0 / step
    keep = [i for i in range(len(header)) if i != time_col]
    if not keep:
        raise ReadingError("the CSV file has a time column but no signal column", path=path)
    unit = meta.get("unit")
    return RawReading([header[i] for i in keep], [values[:, i].copy() for i in keep], fs,
                      units=[unit] * len(keep), meta=meta)


def read_npy(path: str) -> RawReading:
    """One array: (samples,) or (samples, channels). Sample rate from sidecar or options."""
    try:
        data = np.load(path, allow_pickle=False)
    except (ValueError, OSError, EOFError) as exc:
        raise ReadingError(f"not a readable .npy file ({exc})", path=path) from None
    if not isinstance(data, np.ndarray) or data.ndim not in (1, 2) or not np.issubdtype(data.dtype, np.number):
        raise ReadingError("expected a numeric array of shape (samples,) or (samples, channels)", path=path)
    data = data.reshape(len(data), -1).astype(float)
    return RawReading([f"ch{i + 1}" for i in range(data.shape[1])],
                      [data[:, i] for i in range(data.shape[1])])


NPZ_META = ("sample_rate_hz", "fs_hz", "unit", "speed_rpm", "timestamp")


def read_npz(path: str) -> RawReading:
    """Named 1-D arrays, one per channel, plus optional ``sample_rate_hz``, ``unit``, ``speed_rpm``."""
    try:
        archive = np.load(path, allow_pickle=False)
        contents = {k: archive[k] for k in archive.files}
    except (ValueError, OSError, EOFError) as exc:
        raise ReadingError(f"not a readable .npz file ({exc})", path=path) from None
    meta = {k: contents.pop(k).item() for k in NPZ_META if k in contents}
    names = [k for k, v in contents.items() if v.ndim == 1 and np.issubdtype(v.dtype, np.number)]
    if not names:
        raise ReadingError("the .npz archive holds no 1-D numeric array", path=path)
    fs = meta.get("sample_rate_hz", meta.get("fs_hz"))
    unit = str(meta["unit"]) if "unit" in meta else None
    if "speed_rpm" in meta:
        meta["speed_rpm"] = float(meta["speed_rpm"])
    return RawReading(names, [contents[n].astype(float) for n in names],
                      float(fs) if fs is not None else None, units=[unit] * len(names), meta=meta)


def read_uff58(path: str) -> RawReading:
    """Universal File Format type 58 time records (one channel per data set), via pyuff."""
    import pyuff

    try:
        sets = pyuff.UFF(path).read_sets()
    except Exception as exc:  # pyuff raises many kinds on malformed files
        raise ReadingError(f"not a readable UFF file ({exc.__class__.__name__})", path=path) from None
    sets = [sets] if isinstance(sets, dict) else list(sets)
    records = [s for s in sets if s.get("type") == 58 and s.get("func_type") == 1]
    if not records:
        raise ReadingError("no UFF type 58 time-response data set in the file", path=path)
    names, arrays, units, points, rates = [], [], [], [], []
    for i, s in enumerate(records):
        if s.get("abscissa_spacing") != 1:
            raise ReadingError(f"data set {i + 1} is not evenly spaced in time", path=path)
        rates.append(_snap_rate(1.0 / float(s["abscissa_inc"])))
        node, direction = s.get("rsp_node"), UFF_DIRECTIONS.get(abs(int(s.get("rsp_dir", 0))), "")
        entity = str(s.get("rsp_ent_name", "")).strip()
        point = entity if entity and entity != "NONE" else f"node{node}"
        names.append(f"{point}{direction}" if direction else point)
        arrays.append(np.asarray(s["data"], dtype=float))
        label = str(s.get("ordinate_axis_units_lab", "")).strip()
        units.append(None if label in ("", "NONE") else label)
        points.append(point)
    if max(rates) - min(rates) > 1e-6 * max(rates) or len({len(a) for a in arrays}) > 1:
        raise ReadingError("data sets differ in sample rate or length; split them into files", path=path)
    return RawReading(names, arrays, rates[0], units=units, points=points)


def read_mat(path: str) -> RawReading:
    """MATLAB .mat (v5) exports: every numeric vector is a channel, scalars ending in RPM a speed.

    Variables are kept in file order and by name, never by position; a
    struct (``bearing.gs`` style) is opened one level. MATLAB v7.3 (HDF5)
    files are refused with a clear message.
    """
    from scipy.io import loadmat
    from scipy.io.matlab import MatReadError

    try:
        contents = loadmat(path, squeeze_me=True, struct_as_record=False)
    except (MatReadError, ValueError, TypeError, OSError) as exc:
        raise ReadingError(f"not a readable MATLAB v5 .mat file ({exc})", path=path) from None
    except NotImplementedError:
        raise ReadingError("MATLAB v7.3 (HDF5) .mat files are not supported; save with -v7", path=path) from None
    flat = {}
    for key, value in contents.items():
        if key.startswith("__"):
            continue
        if hasattr(value, "_fieldnames"):
            for name in value._fieldnames:
                flat[f"{key}.{name}"] = getattr(value, name)
        else:
            flat[key] = value
    names, arrays, meta = [], [], {}
    for key, value in flat.items():
        arr = np.asarray(value)
        if not np.issubdtype(arr.dtype, np.number):
            continue
        short = key.rsplit(".", 1)[-1].lower()
        if arr.size == 1 and key.upper().endswith("RPM"):
            meta["speed_rpm"] = float(arr.ravel()[0])
        elif arr.size == 1 and short in ("sr", "fs", "sample_rate", "sample_rate_hz", "samplerate"):
            meta["sample_rate_hz"] = float(arr.ravel()[0])
        elif arr.ndim == 1 and arr.size >= 64:
            names.append(key)
            arrays.append(arr.astype(float))
    if not arrays:
        raise ReadingError("the .mat file holds no numeric signal vector", path=path)
    lengths = {len(a) for a in arrays}
    if len(lengths) > 1:
        longest = max(lengths)
        keep = [i for i, a in enumerate(arrays) if len(a) == longest]
        names, arrays = [names[i] for i in keep], [arrays[i] for i in keep]
    return RawReading(names, arrays, meta.pop("sample_rate_hz", None), meta=meta)


def _snap_rate(fs_hz: float) -> float:
    """ASCII UFF keeps the sample interval to about six digits: 1/5120 reads back as
    5119.987 Hz. A rate within 5 ppm of a whole number of Hz is taken as that number."""
    whole = round(fs_hz)
    return float(whole) if whole and abs(fs_hz - whole) <= 5e-6 * fs_hz else fs_hz


def _is_number(text: str) -> bool:
    try:
        float(text)
    except (TypeError, ValueError):
        return False
    return True


READERS = {
    ".wav": read_wav,
    ".csv": read_csv,
    ".npy": read_npy,
    ".npz": read_npz,
    ".mat": read_mat,
    ".uff": read_uff58,
    ".unv": read_uff58,
}
