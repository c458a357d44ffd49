"""Hostile and careless inputs: valid seed files of every kind, and ways to break them.

Shared by the fuzz tests (tests/bad_input/test_fuzz.py, driven by Hypothesis)
and the long run (``python -m bench.fuzz``, driven by a seeded generator):

- ``write_seed(kind, folder)`` writes a valid file of one kind: a reading in
  every format the readers take (WAV PCM 8/16-bit and float, CSV with a
  sample-rate header or a time column, NPY, NPZ, MATLAB .mat, UFF 58), a
  machine file, a sidecar, a site overlay;
- ``mutate_bytes`` applies byte-level operations (flip, insert, delete,
  duplicate, truncate, splice in a token that means something to YAML, CSV or
  a binary header);
- ``mutate_tree`` replaces values deep inside a YAML document with odd ones
  (NaN, 1e300, 23.0, text, lists, control characters, Markdown, mathtext);
- ``odd_array`` makes arrays of odd shapes, types and values, and
  ``write_array`` saves one as a reading;
- ``random_command`` picks a command line over such files.

Nothing here is random by itself: every choice comes from the caller's
generator or Hypothesis, so a failing input can be made again.
"""

from __future__ import annotations

import copy
import random
from pathlib import Path

import numpy as np
import yaml

ROOT = Path(__file__).resolve().parent.parent
MACHINES = sorted((ROOT / "cases/machines").glob("*.yaml")) + [ROOT / "tests/machines/cwru-motor.yaml"]
SITE = ROOT / "cases/site/tallow-ridge.yaml"
FS = 8192.0
N = 8192
READING_KINDS = ("wav16", "wav8", "wavf", "csv", "csv_time", "csv_gz", "npy", "npy2", "npz", "mat", "uff")
YAML_KINDS = ("machine", "sidecar", "site")
SEED_KINDS = READING_KINDS + YAML_KINDS
SUFFIX = {"wav16": ".wav", "wav8": ".wav", "wavf": ".wav", "csv": ".csv", "csv_time": ".csv", "csv_gz": ".csv.gz",
          "npy": ".npy",
          "npy2": ".npy", "npz": ".npz", "mat": ".mat", "uff": ".uff"}

TOKENS = [
    # YAML
    b"&a ", b"*a", b"&a [*a]", b"<<: *a", b"!!float ", b"!!int ", b"!!binary ", b"!!set ", b"!!python/name:os.system",
    b".nan", b".inf", b"-.inf", b"1e400", b"1e-3", b"23.0", b"1:30", b"017", b"0x1F", b"yes", b"~", b"null",
    b"[", b"]", b"{", b"}", b": ", b"- ", b"? ", b"|\n", b">\n", b"\t", b"\n", b"'", b'"', b"#", b"%YAML 1.1\n",
    b"---\n", b"...\n", b"\x1b[31m", b"\x00", b"\x01", b"\xef\xbb\xbf", b"\xff\xfe", b"\xc3\x28",
    # CSV
    b",", b";", b"nan", b"inf", b"-inf", b"1e308", b"-1e308", b"1e-320", b"time_s", b"# sample_rate_hz: ",
    b"# unit: ", b"# sample_rate_hz: 0\n", b"# sample_rate_hz: -5\n", b"# unit: furlongs\n", b"1+2j",
    # binary headers and numbers
    b"\x00\x00\x00\x00", b"\xff\xff\xff\xff", b"\xff\xff\xff\x7f", b"\x00\x00\x00\x80", b"RIFF", b"WAVE",
    b"fmt ", b"data", b"PK\x03\x04", b"\x93NUMPY", b"{'descr': '<c16', 'fortran_order': False, 'shape': (10, 0), }",
    b"MATLAB 5.0 MAT-file", b"    -1\n", b"    58\n",
]

ODD_VALUES = [
    0, -1, 1, 23.0, 0.5, 1e300, -1e300, 1e-300, 5e-324, float("nan"), float("inf"), -float("inf"), 2 ** 70,
    "", "abc", "1e-3", "\x1b]0;owned\x07\x1b[31mred", "<b>bold</b> | *x* _y_ [l](u)", "$\\foo$", "a" * 5000,
    "\u202eevil", "line\nbreak", [], {}, None, True, [1, [2, [3, [4]]]], {"nested": {"deeper": [1.5]}},
]

UNITS = ["g", "m/s^2", "mm/s", "m/s", "in/s", "um", "mm", "mils", "furlongs", "", "G", "m/s2", "\x1b[2J"]


def seed_signal(n: int = N, fs: float = FS, channels: int = 1, seed: int = 0) -> np.ndarray:
    """A plausible acceleration record in g: 1X-like tones, a resonance burst train, noise."""
    rng = np.random.default_rng(seed)
    t = np.arange(n) / fs
    out = []
    for c in range(channels):
        x = 0.05 * np.sin(2 * np.pi * 24.77 * t + c) + 0.02 * np.sin(2 * np.pi * 49.5 * t)
        x += 0.03 * rng.standard_normal(n)
        impacts = (np.sin(2 * np.pi * 89.0 * t) > 0.999).astype(float)
        x += 0.3 * np.convolve(impacts, np.exp(-np.arange(64) / 8) * np.sin(np.arange(64) * 1.9), "same")
        out.append(x)
    return np.stack(out, axis=1) if channels > 1 else out[0]


def _wav(path: Path, x: np.ndarray, fs: float, kind: str) -> None:
    from scipy.io import wavfile

    peak = float(np.max(np.abs(x))) or 1.0
    if kind == "wav16":
        wavfile.write(path, int(fs), np.round(x / peak * 0.9 * 32767).astype(np.int16))
    elif kind == "wav8":
        wavfile.write(path, int(fs), np.round(128 + x / peak * 0.9 * 127).astype(np.uint8))
    else:
        wavfile.write(path, int(fs), x.astype(np.float32))


def _sidecar(path: Path, fields: dict) -> None:
    path.with_name(path.name + ".yaml").write_text(yaml.safe_dump(fields, sort_keys=False))


def _text(path: Path, text: str, gzipped: bool) -> None:
    """Write ``text`` to ``path``, gzip-compressed when asked (a ``.csv.gz`` reading)."""
    if gzipped:
        import gzip
        path.write_bytes(gzip.compress(text.encode("utf-8"), mtime=0))
    else:
        path.write_text(text)


def write_reading(kind: str, path: Path, x: np.ndarray, fs: float = FS, unit: str = "g",
                  sidecar: bool = True) -> Path:
    """Save samples ``x`` (one or two dimensions) as a reading of ``kind``; returns the path."""
    x = np.asarray(x)
    if kind.startswith("wav"):
        _wav(path, x, fs, kind)
        if sidecar:
            peak = float(np.max(np.abs(x))) if x.size and np.isfinite(x).all() else 1.0
            _sidecar(path, {"unit": unit, "scale": (peak / 0.9) if kind != "wavf" and peak else 1.0})
    elif kind in ("csv", "csv_time", "csv_gz"):
        cols = x.reshape(len(x), -1)
        names = [f"P{i + 1}H" for i in range(cols.shape[1])]
        if kind == "csv_time":
            body = "\n".join(",".join([repr(i / fs)] + [repr(float(v)) for v in row]) for i, row in enumerate(cols))
            path.write_text(f"# unit: {unit}\ntime_s," + ",".join(names) + "\n" + body + "\n")
        else:
            body = "\n".join(",".join(repr(float(v)) for v in row) for row in cols)
            _text(path, f"# sample_rate_hz: {fs}\n# unit: {unit}\n" + ",".join(names) + "\n" + body + "\n",
                  kind == "csv_gz")
    elif kind in ("npy", "npy2"):
        np.save(path, x)
        if sidecar:
            _sidecar(path, {"sample_rate_hz": fs, "unit": unit})
    elif kind == "npz":
        cols = x.reshape(len(x), -1) if x.ndim else x
        arrays = {f"P{i + 1}H": cols[:, i] for i in range(cols.shape[1])} if cols.ndim == 2 else {"a": cols}
        with open(path, "wb") as f:
            np.savez(f, **arrays, sample_rate_hz=fs, unit=unit)
    elif kind == "mat":
        from scipy.io import savemat
        cols = x.reshape(len(x), -1) if x.ndim else x.reshape(1, 1)
        savemat(path, {"X100_DE_time": cols[:, 0], "X100RPM": 1486.0, "fs": fs})
        if sidecar:
            _sidecar(path, {"unit": unit})
    elif kind == "uff":
        import pyuff
        cols = x.reshape(len(x), -1)
        sets = [pyuff.prepare_58(binary=0, func_type=1, rsp_node=1, rsp_dir=1 + i, ref_node=1, ref_dir=1,
                                 rsp_ent_name="PUMP", ref_ent_name="PUMP", id1="fuzz",
                                 data=cols[:, i].astype(float), x=np.arange(len(cols)) / fs, abscissa_spacing=1,
                                 abscissa_spec_data_type=17, ordinate_spec_data_type=12,
                                 orddenom_spec_data_type=13, ordinate_axis_units_lab=unit)
                for i in range(cols.shape[1])]
        pyuff.UFF(str(path)).write_sets(sets, mode="overwrite")
    else:
        raise ValueError(f"not a reading kind: {kind}")
    return path


def write_seed(kind: str, folder: Path, name: str = "seed", machine: Path | None = None) -> Path:
    """A valid file of ``kind`` in ``folder`` (a reading with the sidecar it needs, a machine
    file, a sidecar next to a good reading, or a site overlay); returns its path."""
    folder.mkdir(parents=True, exist_ok=True)
    if kind in READING_KINDS:
        x = seed_signal(channels=2 if kind in ("npy2", "csv", "npz", "uff") else 1)
        return write_reading(kind, folder / f"{name}{SUFFIX[kind]}", x)
    if kind == "machine":
        source = machine or MACHINES[0]
        path = folder / f"{name}.yaml"
        path.write_text(source.read_text(encoding="utf-8"), encoding="utf-8")
        return path
    if kind == "sidecar":
        reading = write_reading("npy", folder / f"{name}.npy", seed_signal(), sidecar=False)
        path = reading.with_name(reading.name + ".yaml")
        path.write_text(yaml.safe_dump({"sample_rate_hz": FS, "unit": "g", "point": "P1H", "speed_rpm": 1486,
                                        "channels": [{"name": "DE", "point": "P1H", "direction": "horizontal"}],
                                        "phase_1x": [{"point": "P1H", "phase_deg": 40, "amplitude_mm_s_rms": 2.0},
                                                     {"point": "pump_de", "direction": "vertical", "phase_deg": 130}],
                                        "about": "fuzz seed"}, sort_keys=False))
        return path
    if kind == "site":
        path = folder / f"{name}.yaml"
        path.write_text(SITE.read_text(encoding="utf-8"), encoding="utf-8")
        return path
    raise ValueError(f"unknown seed kind {kind!r}")


def mutate_bytes(data: bytes, ops) -> bytes:
    """Apply ``ops``, each (name, position, length, payload), to ``data``.

    Positions wrap around the data's length, so any integers will do.
    """
    buf = bytearray(data)
    for name, pos, length, payload in ops:
        size = len(buf)
        at = pos % (size + 1)
        if name == "flip" and size:
            buf[at % size] ^= 1 << (length % 8)
        elif name == "insert":
            buf[at:at] = payload
        elif name == "delete":
            del buf[at:at + length]
        elif name == "duplicate":
            buf[at:at] = buf[at:at + length]
        elif name == "truncate":
            del buf[at:]
        elif name == "replace":
            buf[at:at + len(payload)] = payload
    return bytes(buf)


def _paths(node, prefix=()):
    yield prefix
    if isinstance(node, dict):
        for k, v in node.items():
            yield from _paths(v, prefix + (k,))
    elif isinstance(node, list):
        for i, v in enumerate(node):
            yield from _paths(v, prefix + (i,))


def mutate_tree(doc, ops):
    """Replace values inside a parsed YAML document: each op is (path index, value index)."""
    for where, what in ops:
        paths = list(_paths(doc))
        path = paths[where % len(paths)]
        value = copy.deepcopy(ODD_VALUES[what % len(ODD_VALUES)])
        if not path:
            doc = value
            continue
        parent = doc
        for key in path[:-1]:
            parent = parent[key]
        parent[path[-1]] = value
    return doc


def dump_yaml(doc) -> bytes:
    """YAML text of a mutated document, NaN and infinities included."""
    return yaml.safe_dump(doc, sort_keys=False, allow_unicode=True).encode("utf-8")


DTYPES = [np.float64, np.float32, np.float16, np.int16, np.int32, np.int64, np.uint8, np.int8, np.complex128,
          np.bool_, np.uint64]


def odd_array(rng: random.Random) -> np.ndarray:
    """An array a careless or hostile user might save as a reading."""
    n = rng.choice([0, 1, 2, 63, 64, 200, 255, 256, 300, 1024, 4096, N])
    shape = rng.choice([(n,), (n, 1), (n, 2), (n, 0), (0, n), (n, 2, 2), (), (2, n)])
    dtype = rng.choice(DTYPES)
    seed = rng.randrange(2 ** 31)
    values = np.random.default_rng(seed).standard_normal(int(np.prod(shape)) if shape else 1)
    special = rng.choice(["plain", "nan", "inf", "huge", "tiny", "zeros", "constant", "spike", "subnormal",
                          "scaled", "clipped", "step"])
    if special == "nan" and values.size:
        values[rng.randrange(values.size)] = np.nan
    elif special == "inf" and values.size:
        values[rng.randrange(values.size)] = np.inf
    elif special == "huge":
        values = values * 1e307
    elif special == "tiny":
        values = values * 1e-300
    elif special == "zeros":
        values = np.zeros_like(values)
    elif special == "constant":
        values = np.full_like(values, 3.5)
    elif special == "spike" and values.size:
        values = np.zeros_like(values)
        values[-1] = rng.choice([1e-300, 1.7e308, 1.0])
    elif special == "subnormal":
        values = values * 5e-324
    elif special == "scaled":
        values = values * 10.0 ** rng.randint(-12, 12)
    elif special == "clipped":
        values = np.clip(values, -0.3, 0.3)
    elif special == "step" and values.size:
        values[values.size // 2:] += 50.0
    with np.errstate(all="ignore"):
        if dtype is np.complex128:
            arr = (values + 1j * values[::-1]).astype(dtype)
        elif np.issubdtype(dtype, np.integer):
            info = np.iinfo(dtype)
            arr = np.clip(np.nan_to_num(values * info.max / 4), info.min, info.max).astype(dtype)
        else:
            arr = values.astype(dtype)
    return arr.reshape(shape) if shape else arr.reshape(())


def write_array(kind: str, path: Path, arr: np.ndarray, fs: float = FS) -> Path:
    """Save an odd array as a reading of ``kind`` as well as the format allows; where the
    format's writer refuses it, the array goes into the file as .npy bytes (a mislabelled file)."""
    try:
        return _write_array(kind, path, arr, fs)
    except Exception:   # the writer of a format, not tellwave, refused this array
        with open(path, "wb") as f:
            np.save(f, arr)
        return path


def _write_array(kind: str, path: Path, arr: np.ndarray, fs: float) -> Path:
    with np.errstate(all="ignore"):
        if kind in ("npy", "npy2"):
            np.save(path, arr)
            _sidecar(path, {"sample_rate_hz": fs, "unit": "g"})
        elif kind == "npz":
            with open(path, "wb") as f:
                np.savez(f, a=arr, sample_rate_hz=fs, unit="g")
        elif kind == "mat":
            from scipy.io import savemat
            savemat(path, {"X100_DE_time": arr, "fs": fs})
            _sidecar(path, {"unit": "g"})
        elif kind.startswith("wav"):
            from scipy.io import wavfile
            data = arr if arr.dtype in (np.int16, np.int32, np.uint8, np.float32, np.float64) else \
                arr.real.astype(np.float32) if arr.size else arr.astype(np.float32)
            wavfile.write(path, int(fs), data if data.ndim in (1, 2) else data.reshape(len(data), -1))
            _sidecar(path, {"unit": "g", "scale": 1.0})
        elif kind in ("csv", "csv_time", "csv_gz"):
            cols = arr.reshape(arr.shape[0], -1) if arr.ndim >= 1 else arr.reshape(1, 1)
            body = "\n".join(",".join(str(v) for v in row) for row in cols)
            _text(path, f"# sample_rate_hz: {fs}\n# unit: g\n" + body + "\n", kind == "csv_gz")
        else:
            write_reading(kind, path, arr.astype(float) if not np.iscomplexobj(arr) else arr.real, fs)
    return path


def option_values(rng: random.Random) -> list[str]:
    """Reading options with careless or hostile values."""
    out = []
    if rng.random() < 0.3:
        out += ["--rpm", rng.choice(["1486", "0", "-5", "inf", "nan", "1e300", "abc", "0.05", "600000", "1e-3"])]
    if rng.random() < 0.3:
        out += ["--sample-rate", rng.choice(["8192", "1", "0", "-1", "nan", "1e12", "5.12", "100", "abc"])]
    if rng.random() < 0.2:
        out += ["--scale", rng.choice(["1", "1e-300", "1e300", "0", "-2", "nan", "1000", "0.001"])]
    if rng.random() < 0.2:
        out += ["--unit", rng.choice(UNITS)]
    if rng.random() < 0.2:
        out += ["--channels", rng.choice(["P1H", "DE", "nope", ",", "ch1,ch1", "H", "ch2", "P1H,P2H", "DE_time"])]
    return out


def random_command(rng: random.Random, reading: Path | None, machine: Path | None, site: Path | None,
                   output: Path, special: Path | None = None) -> list[str]:
    """One command line over the given files, as a careless user might type it.

    ``special`` is a file that is not a regular file (a FIFO in the scratch folder) to offer as
    an output. Never name a real device here: code that replaces a device node with a file
    does it to the whole machine when run as root.
    """
    machine_arg = str(machine or rng.choice(MACHINES))
    choice = rng.choice(["frequencies", "reading", "evidence", "diagnose", "rulebook"] if reading else
                        ["frequencies", "rulebook"])
    if choice == "frequencies":
        argv = ["frequencies", machine_arg]
        if rng.random() < 0.5:
            argv.append("--json")
        if rng.random() < 0.3:
            argv += ["--rpm", rng.choice(["1486", "inf", "nan", "-1", "0", "1e300", "1e-9", "600000"])]
        return argv
    if choice == "rulebook":
        return ["rulebook", "check"] + (["--site", str(site)] if site else [])
    if choice == "reading":
        return ["reading", str(reading)] + option_values(rng)
    if choice == "evidence":
        return ["evidence", str(reading), "--machine", machine_arg] + (["--json"] if rng.random() < 0.5 else []) \
            + option_values(rng)
    fmt = rng.choice(["text", "md", "json", "html"])
    argv = ["diagnose", str(reading), "--machine", machine_arg, "--format", fmt] + option_values(rng)
    if site and rng.random() < 0.5:
        argv += ["--site", str(site)]
    if rng.random() < 0.4:
        argv += ["-o", rng.choice([str(output), str(reading), "", str(output.parent), str(output) + "/",
                                   str(special or output), str(output.parent / "missing" / "deep" / "r.txt")])]
    return argv


# --- the rest of the tool: routes, plants, history stores, rule structure, plans, outputs -----------

RW2 = ROOT / "cases/machines/rw2-raw-water-pump.yaml"
RW2_NAME = "RW-2 raw water pump"
POLICY = ROOT / "rulebooks/planner/acquisition.yaml"
SHORT_N = 4096          # short readings keep the route and store inputs cheap (0.5 s at FS)
ROUTE_TIMES = ["2026-03-04T09:12:00", "2026-04-04T09:12:00", "25:61", "", "09:20", 1e18, 2 ** 70, -1, 16,
               "2026-13-45T25:61:00", "2026-02-30T10:00:00", "9999-12-31T23:59:59", "0001-01-01T00:00:00",
               float("nan"), float("inf"), "\x1b[2Jnow", "2026-03-04T09:12:00+25:00", "1e18", "yesterday"]
ROUTE_VALUES = [0, -1, 1e18, 2 ** 70, 2 ** 63, float("nan"), float("inf"), "1486", "", 1e-300, 1486, 8192, True,
                None, [], "furlongs", "\x1b]0;owned\x07", "a" * 5000]
PATH_VALUES = ["", "missing.npy", "nul\x00name.npy", "../../../../../../etc/passwd", ".", "..", "/",
               "readings", "route.yaml", "readings/r1.npy.yaml", "machines/m.yaml", "\x1b[31mred.npy",
               "readings/*.npy", "~/r1.npy", "a" * 300 + ".npy", "readings//r1.npy", "readings/./r1.npy"]
STORE_DAMAGE = ("zero page", "random bytes", "last byte cut", "drop table", "version as text", "version newer",
                "version negative", "no version row", "foreign sqlite", "foreign readings table", "inf and nan",
                "odd times", "empty file", "text file", "folder", "wal garbage", "missing", "half header")
STORE_TABLES = ("readings", "channels", "indicators", "hypotheses", "routes", "schema_version")


def short_reading(folder: Path, name: str, seed: int, kind: str = "npy", n: int = SHORT_N, when: str | None = None,
                  point: str = "P1H") -> Path:
    """A short single-channel reading of the RW-2 pump's P1H with its sidecar (time of day included)."""
    folder.mkdir(parents=True, exist_ok=True)
    x = seed_signal(n=max(n, 256), seed=seed)[:n] * (1.0 + 0.3 * seed)
    path = folder / f"{name}{SUFFIX[kind]}"
    write_reading(kind, path, x, sidecar=kind not in ("npy", "npy2", "mat", "wav16", "wav8", "wavf"))
    side = path.with_name(path.name + ".yaml")
    fields = yaml.safe_load(side.read_text()) if side.exists() else {}
    fields = dict(fields or {})
    if kind in ("npy", "npy2"):
        fields["sample_rate_hz"] = FS
    fields.setdefault("unit", "g")
    fields.update({"point": point, "speed_rpm": 1486})
    if when:
        fields["timestamp"] = when
    side.write_text(yaml.safe_dump(fields, sort_keys=False))
    return path


def route_tree(folder: Path, readings: int = 2) -> tuple[Path, dict]:
    """A valid survey in ``folder``: machines/m.yaml, readings/r*.npy with sidecars, route.yaml;
    returns the route file and its document."""
    machine = folder / "machines" / "m.yaml"
    machine.parent.mkdir(parents=True, exist_ok=True)
    machine.write_text(RW2.read_text(encoding="utf-8"), encoding="utf-8")
    items = []
    for k in range(readings):
        r = short_reading(folder / "readings", f"r{k + 1}", seed=k)
        items.append({"file": f"readings/{r.name}", "machine": "rw2", "points": {"ch1": "P1H"},
                      "time": f"2026-03-04T09:{10 + k:02d}:00"})
    doc = {"route": "fuzz survey", "machines": {"rw2": "machines/m.yaml"}, "readings": items}
    route = folder / "route.yaml"
    route.write_bytes(dump_yaml(doc))
    return route, doc


def mutate_route(rng: random.Random, doc: dict) -> dict:
    """A route document with one to three careless or hostile edits aimed at its meaning."""
    doc = copy.deepcopy(doc)
    for _ in range(rng.choice([1, 1, 1, 2, 3])):       # mostly one edit, so that some routes run to the end
        if not isinstance(doc, dict):       # an earlier edit replaced the whole tree
            break
        items = doc.get("readings")
        dicts = [x for x in items if isinstance(x, dict)] if isinstance(items, list) else []
        item = rng.choice(dicts) if dicts else None       # an earlier edit may have put a list among the readings
        what = rng.choice(["time", "time", "value", "path", "duplicate", "machine", "points", "clock", "empty",
                           "many", "tree"])
        if what == "time" and item is not None:
            item["time"] = rng.choice(ROUTE_TIMES)
        elif what == "value" and item is not None:
            item[rng.choice(["speed_rpm", "sample_rate_hz", "unit"])] = rng.choice(ROUTE_VALUES + UNITS)
        elif what == "path" and item is not None:
            if rng.random() < 0.5:
                item["file"] = rng.choice(PATH_VALUES)
            else:
                item.pop("file", None)
                item["files"] = rng.choice([[], ["readings/r1.npy", "readings/r1.npy"], [rng.choice(PATH_VALUES)],
                                            ["readings/r1.npy", "readings/r2.npy"]])
        elif what == "duplicate" and item is not None:
            items.extend(copy.deepcopy(item) for _ in range(rng.choice([1, 2, 5])))
        elif what == "machine" and item is not None:
            item["machine"] = rng.choice(["", "nope", "readings/r1.npy", "machines", "machines/m.yaml", "rw2\x00",
                                          "../../../../etc/hostname", "route.yaml"])
            if rng.random() < 0.3:
                doc["machines"] = rng.choice([{}, {"rw2": ""}, {"rw2": "missing.yaml"}, {"rw2": "nul\x00.yaml"},
                                              {"rw2": "readings/r1.npy"}, {"": "machines/m.yaml"}, []])
        elif what == "points" and item is not None:
            item["points"] = rng.choice([{"P1H": "NOPE"}, {"": ""}, {"ch1": "P1H", "ch2": "P1H"}, {"P1H": None},
                                         {"P1H": 7}, [], {"P1H": "P1H", "P1H\x00": "M1H"}])
        elif what == "clock":
            doc["clock"] = rng.choice([{"start": "2026-03-04T08:00:00", "interval_s": rng.choice([0, -1, 1e308,
                                       float("nan"), 1e-300, 10, 2 ** 70])},
                                       {"start": rng.choice(ROUTE_TIMES)}, {}, None, "08:00"])
        elif what == "empty":
            doc["readings"] = rng.choice([[], None, {}, "readings/r1.npy"])
        elif what == "many" and item is not None:
            items.extend(copy.deepcopy(item) | {"time": f"2026-03-04T10:{m:02d}:00"} for m in range(rng.choice([3, 8])))
        else:
            doc = mutate_tree(doc, [(rng.randrange(1 << 16), rng.randrange(1 << 16))])
    return doc


def plant_tree(folder: Path, readings: int = 2) -> tuple[Path, Path, dict]:
    """A folder of readings with sidecars and a plant file beside it; (folder, plant file, plant doc)."""
    machine = folder / "machines" / "m.yaml"
    machine.parent.mkdir(parents=True, exist_ok=True)
    machine.write_text(RW2.read_text(encoding="utf-8"), encoding="utf-8")
    for k in range(readings):
        short_reading(folder / "readings", f"rw2-{k + 1}", seed=k, when=f"2026-03-04T09:{10 + k:02d}:00")
    doc = {"plant": "fuzz plant", "machines": [{"file": "machines/m.yaml", "readings": ["rw2-*.npy"]}]}
    plant = folder / "plant.yaml"
    plant.write_bytes(dump_yaml(doc))
    return folder / "readings", plant, doc


def mutate_plant(rng: random.Random, doc: dict, readings: Path) -> dict:
    doc = copy.deepcopy(doc)
    for _ in range(rng.choice([1, 1, 1, 2, 3])):
        if not isinstance(doc, dict):       # an earlier edit replaced the whole tree
            break
        entry = doc["machines"][0] if isinstance(doc.get("machines"), list) and doc["machines"] \
            and isinstance(doc["machines"][0], dict) else None
        what = rng.choice(["pattern", "file", "duplicate", "clock", "sidecar", "sidecar", "tree"])
        if what == "pattern" and entry is not None:
            entry["readings"] = rng.choice([[""], ["*"], ["["], ["**/../*"], ["rw2-*.npy", "rw2-*.npy"],
                                            ["*.yaml"], ["nul\x00*"], [], ["rw2-1.npy"] * 3, ["../*"]])
        elif what == "file" and entry is not None:
            entry["file"] = rng.choice(PATH_VALUES + ["machines/m.yaml", "machines/../machines/m.yaml"])
        elif what == "duplicate" and entry is not None:
            doc["machines"].append(copy.deepcopy(entry))
        elif what == "clock":
            doc["clock"] = rng.choice([{"start": rng.choice(ROUTE_TIMES)},
                                       {"start": "2026-03-04T08:00:00", "interval_s": rng.choice([0, 1e308, -5])}])
        elif what == "sidecar":
            side = rng.choice(sorted(readings.glob("*.yaml")))
            fields = yaml.safe_load(side.read_text())
            fields[rng.choice(["timestamp", "speed_rpm", "sample_rate_hz", "unit", "point"])] = \
                rng.choice(ROUTE_TIMES + ROUTE_VALUES)
            side.write_bytes(dump_yaml(fields))
        else:
            doc = mutate_tree(doc, [(rng.randrange(1 << 16), rng.randrange(1 << 16))])
    return doc


def hostile_out_folder(rng: random.Random, folder: Path, victim: Path) -> tuple[Path, str]:
    """An output folder for a route that is already occupied: summary files that are files, folders,
    links to ``victim`` (an input that must survive), a reports entry that is a file; (folder, hazard)."""
    out = _occupied(rng, folder, victim, choice := rng.choice(
        ["summary file", "summary folder", "summary link", "reports file", "out is a file", "out is a link",
         "out link to input folder", "part left", "deep"]))
    return out, choice


def _occupied(rng: random.Random, folder: Path, victim: Path, choice: str) -> Path:
    out = folder / "out"
    if choice == "out is a file":
        out.write_text("not a folder\n")
        return out
    if choice == "out is a link":
        (folder / "real-out").mkdir()
        out.symlink_to(folder / "real-out")
        return out
    if choice == "out link to input folder":
        out.symlink_to(victim.parent)
        return out
    if choice == "deep":
        return out / "a" / "b" / "c"
    out.mkdir()
    name = "summary." + rng.choice(["md", "html", "txt", "json"])
    if choice == "summary file":
        (out / name).write_text("an older summary\n")
    elif choice == "summary folder":
        (out / name).mkdir()
    elif choice == "summary link":
        (out / name).symlink_to(victim)
    elif choice == "reports file":
        (out / "reports").write_text("a file where the reports folder goes\n")
    elif choice == "part left":
        (out / f".{name}.4999999.k3x9.part").write_text("left by a killed run\n")   # above any pid_max: dead
    return out


def damage_store(rng: random.Random, path: Path, how: str) -> None:
    """Damage the valid store at ``path`` in the way ``how`` names (one of STORE_DAMAGE)."""
    import sqlite3

    def sql(*statements):
        db = sqlite3.connect(path, isolation_level=None)
        try:
            for s in statements:
                db.execute(s)
            db.execute("PRAGMA wal_checkpoint(TRUNCATE)")
        finally:
            db.close()

    data = path.read_bytes() if path.is_file() else b""
    if how == "zero page":
        page = 4096
        k = rng.randrange(max(1, len(data) // page))
        path.write_bytes(data[:k * page] + bytes(page) + data[(k + 1) * page:])
    elif how == "random bytes":
        at = rng.randrange(100, max(101, len(data) - 64))
        blob = bytes(rng.randrange(256) for _ in range(rng.choice([1, 8, 64, 512])))
        path.write_bytes(data[:at] + blob + data[at + len(blob):])
    elif how == "last byte cut":
        path.write_bytes(data[:-1])
    elif how == "half header":
        path.write_bytes(data[:rng.choice([16, 50, 99, 100, 4095])])
    elif how == "drop table":
        sql("PRAGMA foreign_keys=OFF", f"DROP TABLE {rng.choice(STORE_TABLES)}")
    elif how == "version as text":
        sql(f"UPDATE schema_version SET version = '{rng.choice(['two', '', '1.5', 'NaN', '2; DROP TABLE x'])}'")
    elif how == "version newer":
        sql(f"UPDATE schema_version SET version = {rng.choice([99, 2 ** 62, 9223372036854775807])}")
    elif how == "version negative":
        sql(f"UPDATE schema_version SET version = {rng.choice([-1, 0, -9223372036854775808])}")
    elif how == "no version row":
        sql(rng.choice(["DELETE FROM schema_version", "INSERT INTO schema_version VALUES (1)"]))
    elif how in ("foreign sqlite", "foreign readings table"):
        path.unlink()
        body = ("CREATE TABLE readings (x TEXT)", "INSERT INTO readings VALUES ('a stranger''s data')") \
            if how == "foreign readings table" else ("CREATE TABLE payroll (name TEXT, pay REAL)",
                                                     "INSERT INTO payroll VALUES ('someone', 1.0)")
        db = sqlite3.connect(path, isolation_level=None)
        for s in body:
            db.execute(s)
        db.close()
    elif how == "inf and nan":
        sql(*rng.sample([
            "UPDATE indicators SET value = 9e999", "UPDATE indicators SET value = -9e999",
            "UPDATE indicators SET value = 'NaN'", "UPDATE indicators SET value = 1e308",
            "UPDATE readings SET speed_rpm = 9e999", "UPDATE readings SET speed_rpm = 'fast'",
            "UPDATE hypotheses SET certainty = 9e999", "UPDATE hypotheses SET certainty = 'NaN'",
            "UPDATE readings SET elapsed_s = -9e999", "UPDATE readings SET fs_hz = 0",
            "UPDATE readings SET duration_s = 'NaN'"], rng.randint(1, 3)))
    elif how == "odd times":
        sql(f"UPDATE readings SET taken_at = '{rng.choice(['', '25:61', '9999-99-99', 'x', '2026-03-04'])}' "
            "WHERE id = (SELECT min(id) FROM readings)")
    elif how == "empty file":
        path.write_bytes(b"")
    elif how == "text file":
        path.write_text("machine,time\nRW-2,2026-03-04\n")
    elif how == "folder":
        path.unlink()
        path.mkdir()
    elif how == "wal garbage":
        Path(str(path) + "-wal").write_bytes(bytes(rng.randrange(256) for _ in range(4096)))
    elif how == "missing":
        path.unlink()
    else:
        raise ValueError(f"unknown store damage {how!r}")


def site_rules(rng: random.Random) -> tuple[str, dict]:
    """A site overlay with a hazard in its rule structure: (hazard, document)."""
    tone = {"fact": "tone", "as": "x1", "where": {"name": "1X", "amplitude_mm_s": {"at_least": 0.5}}}

    def rule(rid, needs, derives=None, weight=0.3):
        r = {"id": rid, "title": f"fuzz rule {rid}", "source": "fuzz input (invented)", "needs": needs,
             "certainty": {"weight": weight}, "because": "fuzz"}
        if derives:
            r["derives"] = derives
        else:
            r["concludes"] = {"fault": "unbalance", "component": "x1.component"}
        return r

    derived = {"fuzz_a": {"about": "a", "fields": {"component": {"type": "string", "about": "c"}}},
               "fuzz_b": {"about": "b", "fields": {"component": {"type": "string", "about": "c"}}}}
    hazard = rng.choice(["cycle", "self cycle", "many rules", "missing fact", "missing field", "declared never made",
                         "deep chain", "cycle concluding"])
    if hazard in ("cycle", "cycle concluding"):
        rules = [rule("site.fuzz.seed", [tone], {"fact": "fuzz_a", "fields": {"component": "x1.component"}}),
                 rule("site.fuzz.a-to-b", [{"fact": "fuzz_a", "as": "a"}],
                      {"fact": "fuzz_b", "fields": {"component": "a.component"}}),
                 rule("site.fuzz.b-to-a", [{"fact": "fuzz_b", "as": "b"}],
                      {"fact": "fuzz_a", "fields": {"component": "b.component"}})]
        if hazard == "cycle concluding":
            rules.append(rule("site.fuzz.end", [{"fact": "fuzz_b", "as": "b"}, tone]))
    elif hazard == "self cycle":
        rules = [rule("site.fuzz.seed", [tone], {"fact": "fuzz_a", "fields": {"component": "x1.component"}}),
                 rule("site.fuzz.self", [{"fact": "fuzz_a", "as": "a"}],
                      {"fact": "fuzz_a", "fields": {"component": "a.component"}})]
    elif hazard == "many rules":
        n = rng.choice([66, 250, rng.randint(20, 400)])
        rules = [rule(f"site.fuzz.many-{k}", [{"fact": "tone", "as": "x1",
                                                "where": {"name": "1X",
                                                          "amplitude_mm_s": {"at_least": 0.01 + k * 0.01}}}],
                      weight=rng.choice([0.01, 0.2, -0.1]))
                 for k in range(n)]
    elif hazard == "deep chain":
        n = rng.choice([10, 40])
        derived = {f"fuzz_{k}": {"about": "x", "fields": {"component": {"type": "string", "about": "c"}}}
                   for k in range(n)}
        rules = [rule("site.fuzz.chain-0", [tone], {"fact": "fuzz_0", "fields": {"component": "x1.component"}})]
        rules += [rule(f"site.fuzz.chain-{k}", [{"fact": f"fuzz_{k - 1}", "as": "p"}],
                       {"fact": f"fuzz_{k}", "fields": {"component": "p.component"}}) for k in range(1, n)]
    elif hazard == "missing fact":
        rules = [rule("site.fuzz.missing",
                      [{"fact": rng.choice(["no_such_fact", "fuzz_c", "", "tone\x00"]), "as": "x1"}])]
    elif hazard == "missing field":
        rules = [rule("site.fuzz.field", [{"fact": "tone", "as": "x1",
                                           "where": {rng.choice(["no_such_field", "x1.nope", ""]): 1}}])]
    else:
        rules = [rule("site.fuzz.waits", [{"fact": "fuzz_b", "as": "b"}, tone])]
    return hazard, {"rulebook": "fuzz site", "derived": derived, "rules": rules}


PLAN_RPM = ["1486", "0", "-1", "nan", "inf", "1e-9", "1e18", "3000", "1500", "2000", "6000", "1500.0001", "0.5", "60"]
PLAN_FMAX = ["2147483648", "0", "-1", "nan", "inf", "1e-3", "1", "10", "500", "1000", "5000", "1e300"]
PLAN_LINES = ["10000000", "0", "-1", "1", "2", "400", "3200", "12800", "2147483648", "abc"]
PLAN_DURATION = ["0", "-1", "nan", "1e9", "0.001", "1", "10", "1e-300"]
PLAN_RATE = ["0", "-1", "nan", "1", "100", "2560", "25600", "1e12"]


def plan_command(rng: random.Random, machine: Path, reading: Path | None, policy: Path | None,
                 output: Path) -> list[str]:
    """``plan`` with careless or extreme settings; mostly without the proof by simulation (its cost)."""
    argv = ["plan", str(machine)]
    if rng.random() < 0.6:
        argv += ["--rpm", rng.choice(PLAN_RPM)]
    style = rng.choice(["fmax lines", "rate duration", "fmax duration", "reading", "none", "all"])
    if style in ("fmax lines", "fmax duration", "all"):
        argv += ["--fmax", rng.choice(PLAN_FMAX)]
    if style in ("fmax lines", "all"):
        argv += ["--lines", rng.choice(PLAN_LINES)]
    if style in ("rate duration", "fmax duration", "all"):
        argv += ["--duration", rng.choice(PLAN_DURATION)]
    if style in ("rate duration", "all"):
        argv += ["--sample-rate", rng.choice(PLAN_RATE)]
    if style == "reading" and reading is not None:
        argv += ["--reading", str(reading)]
    if rng.random() < 0.2:
        argv += ["--point", rng.choice(["P1H", "NOPE", "", "M1H", "\x1b[2J"])]
    if policy is not None:
        argv += ["--policy", str(policy)]
    if rng.random() < 0.85:
        argv.append("--no-proof")
    argv += ["--format", rng.choice(["text", "md", "json", "html"])]
    if rng.random() < 0.5:
        argv += ["-o", str(output)]
    return argv


TREND_LIMITS = ["accel_peak_g=20", "accel_peak_g=0", "accel_peak_g=-1", "accel_peak_g=nan", "accel_peak_g=inf",
                "accel_peak_g=1e308", "accel_peak_g=1e-300", "velocity_rms_mm_s=4.5", "nope=1", "=", "accel_peak_g",
                "accel_peak_g=", "accel_peak_g==3", " accel_peak_g = 2 "]


def history_command(rng: random.Random, store: Path, output: Path) -> list[str]:
    """``history`` or ``trend`` over ``store`` with careless options."""
    machine = rng.choice([RW2_NAME] * 8 + ["", "nope", "rw2", RW2_NAME.lower(), "\x1b]0;owned\x07", "%", "_", "*"])
    if rng.random() < 0.45:
        argv = ["history"] + ([machine] if rng.random() < 0.7 else []) + ["--store", str(store)]
        if rng.random() < 0.4:
            argv.append("--json")
        if rng.random() < 0.35:
            argv += ["--delete", rng.choice(["1", "2", "0", "-1", "99999", str(2 ** 63), str(2 ** 70), "9" * 40,
                                             "1e3", "x"])]
        return argv
    argv = ["trend", machine, "--store", str(store), "--format", rng.choice(["text", "md", "html", "json"])]
    if rng.random() < 0.3:
        argv += ["--point", rng.choice(["P1H", "NOPE", "", "M1H", "p1h"])]
    for _ in range(rng.choice([0, 0, 1, 2])):
        argv += ["--limit", rng.choice(TREND_LIMITS)]
    if rng.random() < 0.4:
        argv += ["-o", str(output)]
    return argv


def strict_json(text: str):
    """Parse ``text`` as RFC 8259 JSON: NaN, Infinity and -Infinity are errors, as in strict parsers."""
    import json

    def refuse(token):
        raise ValueError(f"not RFC 8259 JSON: {token}")
    return json.loads(text, parse_constant=refuse)


__all__ = ["MACHINES", "RW2", "RW2_NAME", "STORE_DAMAGE", "damage_store", "history_command", "hostile_out_folder",
           "mutate_plant", "mutate_route", "plan_command", "plant_tree", "route_tree", "short_reading", "site_rules",
           "READING_KINDS", "SEED_KINDS", "TOKENS", "ODD_VALUES", "YAML_KINDS", "dump_yaml",
           "mutate_bytes", "mutate_tree", "odd_array", "option_values", "random_command", "seed_signal",
           "strict_json", "write_array", "write_reading", "write_seed"]
