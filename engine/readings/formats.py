"""File readers: WAV, CSV, NumPy .npy/.npz, MATLAB .mat and UFF type 58.

Each reader returns ``RawReading``: arrays in the file's own unit plus
whatever metadata the file itself states. ``load_reading`` merges that with
the sidecar and the caller's options and converts to SI. ``check_raw`` is
the one place that decides whether what a reader found can be a reading at
all (real, finite-sized, one-dimensional channels of equal length), so
every format refuses odd shapes, complex data and oversized contents alike.
"""

from __future__ import annotations

import csv
import gzip
import io
import struct
import warnings
import zipfile
import zlib
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from ..common.errors import ReadingError
from .limits import MAX_CHANNELS, MAX_FILE_BYTES, SampleLimit

DEFAULT_LIMIT = SampleLimit()
TIME_COLUMNS = ("time_s", "time", "t")
TIME_UNITS_S = {"s": 1.0, "sec": 1.0, "ms": 1e-3}   # a header's unit: "Time (s)", "time [ms]"
UNIFORM_SPACING_TOLERANCE = 0.01  # time stamps may jitter by 1 % of the sample interval
UFF_DIRECTIONS = {1: "x", 2: "y", 3: "z"}


@dataclass
class RawReading:
    """What a reader found in a file, before any check: channel names and sample arrays, and
    what the file states of sample rate, units, full scale and points (None where it states nothing)."""
    names: list[str]
    arrays: list[np.ndarray]
    fs_hz: float | None = None
    units: list[str | None] = field(default_factory=list)
    full_scale: float | None = None     # digital full scale, in the arrays' own units
    points: list[str | None] = field(default_factory=list)
    meta: dict = field(default_factory=dict)
    named: bool = True      # False: the format gives no channel names (ch1, ch2... stand in for them)


def read_wav(path: str, limit: SampleLimit = DEFAULT_LIMIT) -> RawReading:
    """PCM 8/16/24/32-bit or float WAV; integers are normalised to +-1 full scale."""
    from scipy.io import wavfile

    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", wavfile.WavFileWarning)
            fs, data = wavfile.read(path)
    except (ValueError, EOFError, OSError) as exc:
        raise ReadingError(f"not a readable WAV file ({_short(exc)})", path=path) from None
    limit.check(path, data.shape[0], data.shape[1] if data.ndim == 2 else 1)   # before any float copy
    if data.dtype == np.uint8:
        x, full_scale = (data.astype(float) - 128.0) / 128.0, 1.0
    elif np.issubdtype(data.dtype, np.integer):
        # scipy returns 24-bit samples left-justified in int32, so one divisor fits both.
        bits = 8 * data.dtype.itemsize
        x, full_scale = data.astype(float) / 2.0 ** (bits - 1), 1.0
    else:
        x, full_scale = data.astype(float), None
    x = x[:, None] if x.ndim == 1 else x
    names = [f"ch{i + 1}" for i in range(x.shape[1])]
    return RawReading(names, [x[:, i] for i in range(x.shape[1])], float(fs),
                      full_scale=full_scale, named=False)


def read_csv(path: str, limit: SampleLimit = DEFAULT_LIMIT) -> RawReading:
    """CSV with ``# key: value`` header lines, a row of column names, then numbers.

    The sample rate comes from ``# sample_rate_hz:`` or from a time column
    (``time_s``, ``time`` or ``t``, in seconds) that must be uniformly spaced.
    Rows are counted before any is parsed, and parsed one at a time into one
    array, so memory follows the file's size, not Python's lists of text.
    """
    try:
        text = Path(path).read_text(encoding="utf-8-sig")
    except UnicodeDecodeError:
        raise ReadingError("not a text CSV file", path=path) from None
    return csv_of_text(path, text, limit)


def read_csv_gz(path: str, limit: SampleLimit = DEFAULT_LIMIT) -> RawReading:
    """A gzip-compressed CSV (``reading.csv.gz``), read as ``read_csv`` reads a plain one once unpacked in memory
    (at most ``MAX_FILE_BYTES`` unpacked, as a plain file may hold on disk)."""
    try:
        text = gunzip(path).decode("utf-8-sig")
    except UnicodeDecodeError:
        raise ReadingError("not a text CSV file once unpacked", path=path) from None
    return csv_of_text(path, text, limit)


def gunzip(path: str, most_bytes: int = MAX_FILE_BYTES) -> bytes:
    """The bytes a gzip file unpacks to, read a megabyte at a time; more than ``most_bytes`` is refused before it
    is all unpacked, and a file that is not gzip or is cut short is a ``ReadingError``."""
    parts, total = [], 0
    try:
        with gzip.open(path, "rb") as f:
            while chunk := f.read(1 << 20):
                total += len(chunk)
                if total > most_bytes:
                    raise ReadingError(f"unpacks to more than {most_bytes >> 20} MiB; cut the record", path=path)
                parts.append(chunk)
    except ReadingError:
        raise
    except (OSError, EOFError, zlib.error) as exc:     # gzip.BadGzipFile is an OSError
        raise ReadingError(f"not a readable gzip file ({_short(exc)})", path=path) from None
    return b"".join(parts)


def csv_of_text(path: str, text: str, limit: SampleLimit = DEFAULT_LIMIT) -> RawReading:
    """The CSV reading of ``text``, the contents of ``path`` (see ``read_csv``)."""
    if "\0" in text:
        raise ReadingError("not a text CSV file (it holds NUL bytes)", path=path)

    def body():
        """(line number, line) of every data line, header row included; metadata into ``meta``."""
        for lineno, line in enumerate(io.StringIO(text), start=1):
            stripped = line.strip()
            if not stripped:
                continue
            if stripped.startswith("#"):
                key, sep, value = stripped.lstrip("#").partition(":")
                if sep:
                    meta[key.strip()] = value.strip()
                continue
            yield lineno, line.rstrip("\r\n")

    meta: dict = {}
    n_body, first = 0, None
    for lineno, line in body():
        n_body += 1
        first = first or (lineno, line)
        if n_body > limit.per_channel + 1:
            limit.check(path, n_body - 1, what="holds at least")
    if first is None:
        raise ReadingError("the CSV file holds no data rows", path=path)
    try:
        header = [c.strip() for c in next(csv.reader([first[1]]))]
    except (csv.Error, StopIteration) as exc:
        raise ReadingError(f"not a readable CSV file ({exc})", path=path) from None
    named = not all(_is_number(c) for c in header)
    if not named:
        header = [f"ch{i + 1}" for i in range(len(header))]
    n_rows = n_body - (1 if named else 0)
    if len(header) > MAX_CHANNELS + 1:
        raise ReadingError(f"holds {len(header)} columns; tellwave reads at most {MAX_CHANNELS} channels", path=path)
    limit.check(path, n_rows, max(1, len(header) - 1))
    values = np.empty((n_rows, len(header)))
    where = [0]

    def lines():
        rows = body()
        if named:
            next(rows)
        for lineno, line in rows:
            where[0] = lineno
            yield line

    reader = csv.reader(lines())
    r = -1
    try:
        for r, row in enumerate(reader):
            if reader.line_num != r + 1:   # a quoted field ran over several lines
                raise ReadingError("a quoted field runs over several lines; a reading has one row per line",
                                   path=path)
            if len(row) != len(header):
                raise ReadingError(f"expected {len(header)} columns, got {len(row)}", path=path, line=where[0])
            try:
                values[r] = [float(c) for c in row]
            except ValueError:
                raise ReadingError(f"not a number in {row!r}", path=path, line=where[0]) from None
    except csv.Error as exc:
        raise ReadingError(f"not a readable CSV file ({exc})", path=path) from None
    values = values[:r + 1]
    if len(values) == 0:
        raise ReadingError("the CSV file holds no data rows", path=path)
    stated = meta.get("sample_rate_hz")
    if stated is not None and not _is_number(stated):
        raise ReadingError(f"'# sample_rate_hz:' must be a number, got {stated!r}", path=path)
    fs = float(stated) if stated is not None else None
    time_col, seconds_per_unit = _time_column(header)
    if time_col is not None:
        step = sample_interval_s(values[:, time_col] * seconds_per_unit, f"time column {header[time_col]!r}", path)
        fs = fs or 1.0 / step
    keep = [i for i in range(len(header)) if i != time_col]
    if not keep:
        raise ReadingError("the CSV file has a time column but no signal column", path=path)
    unit = meta.get("unit")
    return RawReading([header[i] for i in keep], [values[:, i].copy() for i in keep], fs,
                      units=[unit] * len(keep), meta=meta, named=named)


def _time_column(header: list[str]) -> tuple[int | None, float]:
    """Which column holds time, and its unit in seconds: ``time_s``, ``time``, ``t``, or one of them with a
    unit in brackets (``Time (s)``, ``time [ms]``)."""
    for i, name in enumerate(header):
        word, _, unit = name.lower().replace("[", "(").partition("(")
        unit = unit.rstrip(")] ").strip()
        if word.strip() in TIME_COLUMNS and (not unit or unit in TIME_UNITS_S):
            return i, TIME_UNITS_S.get(unit, 1.0)
    return None, 1.0


def sample_interval_s(t: np.ndarray, what: str, path: str) -> float:
    """The sample interval a time column gives, s: the whole span over the number of steps, since stamps
    written to a few decimals jitter step by step (1/25600 s written to 7 decimals is 3.91e-5, 0.1 % long)
    while the span's rounding is shared by every step. Stamps must increase, each step within
    ``UNIFORM_SPACING_TOLERANCE`` of that interval."""
    with np.errstate(all="ignore"):
        dt = np.diff(t)
        if len(dt) == 0 or not np.all(np.isfinite(t)) or not np.all(dt > 0):
            raise ReadingError(f"{what} must increase", path=path)
        step = float((t[-1] - t[0]) / len(dt))
        if np.max(np.abs(dt - step)) > UNIFORM_SPACING_TOLERANCE * step + _written_digits_error(t):
            raise ReadingError(f"{what} is not uniformly spaced", path=path)
    return step


def _written_digits_error(t: np.ndarray) -> float:
    """How far one step may be off from rounding alone: one unit of the last decimal the stamps are written
    to (found as the coarsest power of ten every stamp is a whole multiple of, down to 1e-12 s)."""
    for decimals in range(0, 13):
        scaled = t * 10.0 ** decimals
        if np.all(np.abs(scaled - np.round(scaled)) < 1e-6):
            return 10.0 ** -decimals
    return 0.0


def read_npy(path: str, limit: SampleLimit = DEFAULT_LIMIT) -> RawReading:
    """One array: (samples,) or (samples, channels). Sample rate from sidecar or options."""
    try:
        with open(path, "rb") as f:
            version = np.lib.format.read_magic(f)
            shape, _, dtype = (np.lib.format.read_array_header_1_0(f) if version == (1, 0)
                               else np.lib.format.read_array_header_2_0(f))
    except (ValueError, OSError, EOFError) as exc:
        raise ReadingError(f"not a readable .npy file ({_short(exc)})", path=path) from None
    _check_declared(path, shape, dtype, limit)
    try:
        data = np.load(path, allow_pickle=False)
    except (ValueError, OSError, EOFError) as exc:
        raise ReadingError(f"not a readable .npy file ({_short(exc)})", path=path) from None
    if data.ndim not in (1, 2):
        raise ReadingError(f"expected an array of shape (samples,) or (samples, channels), got {data.shape}",
                           path=path)
    columns = data.reshape(len(data), -1)
    return RawReading([f"ch{i + 1}" for i in range(columns.shape[1])],
                      [columns[:, i] for i in range(columns.shape[1])], named=False)


NPZ_META = ("sample_rate_hz", "fs_hz", "unit", "speed_rpm", "timestamp")


def read_npz(path: str, limit: SampleLimit = DEFAULT_LIMIT) -> RawReading:
    """Named 1-D arrays, one per channel, plus optional ``sample_rate_hz``, ``unit``, ``speed_rpm``.

    Each array's header is read inside the archive before anything is
    unpacked: shapes and types are judged against ``limit`` first, and only
    the metadata and the 1-D numeric arrays are then unpacked.
    """
    declared = {}
    try:
        with zipfile.ZipFile(path) as z:
            infos = z.infolist()
            unpacked = sum(info.file_size for info in infos)
            if unpacked > limit.total_bytes or len(infos) > MAX_CHANNELS + len(NPZ_META):
                raise ReadingError(f"the archive unpacks to {unpacked} bytes in {len(infos)} arrays: more than "
                                   f"tellwave reads ({limit.total_bytes} bytes)", path=path)
            for info in infos:
                if not info.filename.endswith(".npy"):
                    continue
                with z.open(info) as f:
                    version = np.lib.format.read_magic(f)
                    shape, _, dtype = (np.lib.format.read_array_header_1_0(f) if version == (1, 0)
                                       else np.lib.format.read_array_header_2_0(f))
                declared[info.filename[:-4]] = (tuple(shape), dtype)
    except ReadingError:
        raise
    except (zipfile.BadZipFile, OSError, EOFError, ValueError, RuntimeError, NotImplementedError) as exc:
        raise ReadingError(f"not a readable .npz file ({_short(exc)})", path=path) from None
    wanted = [k for k, (shape, dtype) in declared.items()
              if k in NPZ_META or (len(shape) == 1 and _numeric(dtype) and not dtype.hasobject)]
    lengths = [declared[k][0][0] for k in wanted if k not in NPZ_META]
    if lengths:
        limit.check(path, max(lengths), len(lengths), what="declares")
        if sum(lengths) > limit.total:
            limit.check(path, sum(lengths), 1, what="declares")
    for k in NPZ_META:
        if k in declared and int(np.prod(declared[k][0], dtype=float)) > 1:
            raise ReadingError(f"{k!r} must be a single value, got an array of shape {declared[k][0]}", path=path)
    try:
        with np.load(path, allow_pickle=False) as archive:
            contents = {k: archive[k] for k in wanted}
    except (ValueError, OSError, EOFError, zipfile.BadZipFile, KeyError) as exc:
        raise ReadingError(f"not a readable .npz file ({_short(exc)})", path=path) from None
    meta = {k: _scalar(path, k, contents.pop(k)) for k in NPZ_META if k in contents}
    names = [k for k, v in contents.items() if v.ndim == 1 and _numeric(v.dtype)]
    if not names:
        raise ReadingError("the .npz archive holds no 1-D numeric array", path=path)
    fs = meta.get("sample_rate_hz", meta.get("fs_hz"))
    unit = str(meta["unit"]) if "unit" in meta else None
    return RawReading(names, [contents[n] for n in names], fs, units=[unit] * len(names), meta=meta)


def _scalar(path: str, key: str, value: np.ndarray):
    """One metadata value of an archive: a number, or text for ``unit`` and ``timestamp``."""
    if value.size != 1:
        raise ReadingError(f"{key!r} must be a single value, got an array of shape {value.shape}", path=path)
    item = value.reshape(()).item()
    if key in ("unit", "timestamp"):
        return item.decode("utf-8", "replace") if isinstance(item, bytes) else str(item)
    if isinstance(item, bool) or not isinstance(item, (int, float)):
        raise ReadingError(f"{key!r} must be a number, got {item!r}", path=path)
    return float(item)


def read_uff58(path: str, limit: SampleLimit = DEFAULT_LIMIT) -> RawReading:
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
    names, arrays, units, rates = [], [], [], []
    points: list[str | None] = []
    for i, s in enumerate(records):
        if s.get("abscissa_spacing") != 1:
            raise ReadingError(f"data set {i + 1} is not evenly spaced in time", path=path)
        step = float(s.get("abscissa_inc", 0.0))
        if not (np.isfinite(step) and step > 0):
            raise ReadingError(f"data set {i + 1} states a time step of {step:g} s", path=path)
        rates.append(_snap_rate(1.0 / step))
        node, direction = s.get("rsp_node"), UFF_DIRECTIONS.get(abs(int(s.get("rsp_dir", 0))), "")
        entity = str(s.get("rsp_ent_name", "")).strip()
        point = entity if entity and entity != "NONE" else f"node{node}"
        names.append(f"{point}{direction}" if direction else point)
        arrays.append(np.asarray(s["data"]))
        label = str(s.get("ordinate_axis_units_lab", "")).strip()
        units.append(None if label in ("", "NONE") else label)
        points.append(point)
    if max(rates) - min(rates) > 1e-6 * max(rates) or len({len(a) for a in arrays}) > 1:
        raise ReadingError("data sets differ in sample rate or length; split them into files", path=path)
    return RawReading(names, arrays, rates[0], units=units, points=points)


def read_mat(path: str, limit: SampleLimit = DEFAULT_LIMIT) -> RawReading:
    """MATLAB .mat (v5) exports: every numeric vector is a channel, scalars ending in RPM a speed.

    Variables are kept in file order and by name, never by position; a
    struct (``bearing.gs`` style) is opened one level. MATLAB v7.3 (HDF5)
    files are refused with a clear message.
    """
    from scipy.io import loadmat, whosmat
    from scipy.io.matlab import MatReadError

    _check_mat_unpacked(path, limit)     # before whosmat, which may unpack a compressed struct whole
    try:
        variables = whosmat(path)
    except NotImplementedError:
        raise ReadingError("MATLAB v7.3 (HDF5) .mat files are not supported; save with -v7", path=path) from None
    except Exception as exc:  # scipy raises many kinds on malformed headers
        raise ReadingError(f"not a readable MATLAB v5 .mat file ({_short(exc)})", path=path) from None
    sizes = [int(np.prod(shape, dtype=float)) for _, shape, _ in variables]
    if sizes:
        limit.check(path, max(sizes), what="declares")
        if sum(sizes) > limit.total:
            limit.check(path, sum(sizes), 1, what="declares")
    try:
        contents = loadmat(path, squeeze_me=True, struct_as_record=False)
    except (MatReadError, ValueError, TypeError, OSError) as exc:
        raise ReadingError(f"not a readable MATLAB v5 .mat file ({_short(exc)})", path=path) from None
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
        if not _numeric(arr.dtype):
            continue
        short = key.rsplit(".", 1)[-1].lower()
        if arr.size == 1 and key.upper().endswith("RPM"):
            meta["speed_rpm"] = _real_scalar(path, key, arr)
        elif arr.size == 1 and short in ("sr", "fs", "sample_rate", "sample_rate_hz", "samplerate"):
            meta["sample_rate_hz"] = _real_scalar(path, key, arr)
        elif arr.ndim == 1 and arr.size >= 64:
            names.append(key)
            arrays.append(arr)
    if not arrays:
        raise ReadingError("the .mat file holds no numeric signal vector", path=path)
    lengths = {len(a) for a in arrays}
    if len(lengths) > 1:
        longest = max(lengths)
        keep = [i for i, a in enumerate(arrays) if len(a) == longest]
        names, arrays = [names[i] for i in keep], [arrays[i] for i in keep]
    return RawReading(names, arrays, meta.pop("sample_rate_hz", None), meta=meta)


def _check_mat_unpacked(path: str, limit: SampleLimit) -> None:
    """Walk a MATLAB v5 file's top-level elements and count what they unpack to, without keeping it:
    compressed elements are inflated a megabyte at a time and dropped. More than ``limit.total_bytes``
    is refused before ``loadmat`` unpacks anything."""
    with open(path, "rb") as f:
        head = f.read(128)
        if len(head) < 128 or head[126:128] not in (b"IM", b"MI"):
            return                          # MATLAB v4: not compressed, the file's size bounds it
        order = "<" if head[126:128] == b"IM" else ">"
        total = 0
        while True:
            tag = f.read(8)
            if len(tag) < 8:
                return
            kind, nbytes = struct.unpack(order + "II", tag)
            if kind >> 16:                  # small data element: its data is in the tag
                continue
            if kind == 15:                  # miCOMPRESSED
                inflate, left = zlib.decompressobj(), nbytes
                while left > 0:
                    data = f.read(min(left, 1 << 20))
                    if not data:
                        break
                    left -= len(data)
                    try:
                        while data:
                            total += len(inflate.decompress(data, 1 << 20))
                            data = inflate.unconsumed_tail
                            if total > limit.total_bytes:
                                break
                    except zlib.error:
                        return                  # loadmat reports the corrupt stream
                    if total > limit.total_bytes:
                        break
            else:
                total += nbytes
                f.seek(nbytes + (-nbytes % 8), 1)
            if total > limit.total_bytes:
                raise ReadingError(f"the file unpacks to more than {limit.total_bytes} bytes: more samples than "
                                   f"tellwave reads ({limit.total} over all channels; cut the record, or raise "
                                   "the limit with --max-samples)", path=path)


def _numeric(dtype) -> bool:
    """Numbers, real or complex (complex is refused later, by name); not text, bools or records."""
    return np.issubdtype(dtype, np.number) and not np.issubdtype(dtype, np.timedelta64)


def _real_scalar(path: str, key: str, arr: np.ndarray) -> float:
    if np.iscomplexobj(arr):
        raise ReadingError(f"{key!r} is a complex number; it must be real", path=path)
    return float(arr.ravel()[0])


def _short(exc: Exception) -> str:
    """An exception as a short phrase for a one-line message."""
    text = " ".join(str(exc).split())
    text = text if len(text) <= 100 else text[:97] + "..."
    return text or exc.__class__.__name__


def _check_declared(path: str, shape, dtype, limit: SampleLimit) -> None:
    """Refuse an array header whose contents could never be a reading, before reading it."""
    if dtype.hasobject or dtype.fields is not None:
        raise ReadingError("expected a numeric array of samples, got records or Python objects", path=path)
    if len(shape) in (1, 2):
        limit.check(path, int(shape[0]) if shape else 1, int(np.prod(shape[1:], dtype=float)), what="declares")
    elif int(np.prod(shape, dtype=float)) > limit.total:
        raise ReadingError(f"the array of shape {tuple(shape)} holds more samples than tellwave reads "
                           f"({limit.total})", path=path)


def check_raw(path: str, raw: RawReading, limit: SampleLimit = DEFAULT_LIMIT) -> RawReading:
    """Channels a reading can be made of: real numbers, one dimension, equal lengths, not too many.

    Returns the reading with every array as float64 samples; raises
    ``ReadingError`` naming the problem otherwise. Complex data is refused
    rather than cut to its real part, which would silently halve what was
    measured.
    """
    if not raw.arrays:
        raise ReadingError("holds no channels", path=path)
    if len(raw.arrays) > MAX_CHANNELS:
        raise ReadingError(f"holds {len(raw.arrays)} channels; tellwave reads at most {MAX_CHANNELS}", path=path)
    arrays = []
    for name, a in zip(raw.names, raw.arrays):
        a = np.asarray(a)
        if a.dtype.hasobject or not _numeric(a.dtype):
            raise ReadingError(f"channel {name!r} holds {a.dtype} values, not numbers", path=path)
        if np.iscomplexobj(a):
            raise ReadingError(f"channel {name!r} holds complex numbers; a reading is real samples "
                               "(save the real signal, not a spectrum or an analytic signal)", path=path)
        if a.ndim != 1:
            raise ReadingError(f"channel {name!r} has shape {a.shape}; expected one row of samples", path=path)
        limit.check(path, len(a), len(raw.arrays))       # before the float64 copy
        a = a.astype(np.float64, copy=False)
        arrays.append(a if a.flags.writeable else a.copy())   # the units are applied in place
    lengths = {len(a) for a in arrays}
    if len(lengths) > 1:
        raise ReadingError(f"channels differ in length ({', '.join(map(str, sorted(lengths)))} samples); "
                           "put them in separate files", path=path)
    if lengths == {0}:
        raise ReadingError("holds no samples", path=path)
    limit.check(path, len(arrays[0]), len(arrays))
    names = [str(n) for n in raw.names]
    return RawReading(names, arrays, raw.fs_hz, list(raw.units), raw.full_scale, list(raw.points), raw.meta,
                      raw.named)


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


GZIP_SUFFIX = ".gz"
GZIP_READERS = {".csv": read_csv_gz}
"""Formats read gzip-compressed too, by the suffix before ``.gz``: text formats, which compress well and are
read whole; UFF is read by a library that opens the file itself (unpack it first), and the binary formats are
compact already (NPZ and MATLAB v5 compress inside)."""

READERS = {
    ".wav": read_wav,
    ".csv": read_csv,
    ".npy": read_npy,
    ".npz": read_npz,
    ".mat": read_mat,
    ".uff": read_uff58,
    ".unv": read_uff58,
}


def reader_of(path: str):
    """The reader of ``path`` and the name of its format (``CSV``, ``gzip CSV``), by its suffix (the one before
    ``.gz`` for a gzip file); (None, the suffix) when no reader takes it."""
    suffixes = [x.lower() for x in Path(path).suffixes]
    last = suffixes[-1] if suffixes else ""
    if last == GZIP_SUFFIX and len(suffixes) > 1 and suffixes[-2] in GZIP_READERS:
        return GZIP_READERS[suffixes[-2]], f"gzip {suffixes[-2].lstrip('.').upper()}"
    if last in READERS:
        return READERS[last], last.lstrip(".").upper()
    inner = suffixes[-2] + last if last == GZIP_SUFFIX and len(suffixes) > 1 else last
    return None, inner


def reading_suffixes() -> tuple[str, ...]:
    """Every file suffix a reader takes: the plain formats and the gzip ones (``.csv.gz``)."""
    return tuple(READERS) + tuple(s + GZIP_SUFFIX for s in GZIP_READERS)


def is_reading_name(name: str) -> bool:
    """Whether a file of this name is read as a reading (its suffix, any case)."""
    return reader_of(name)[0] is not None
