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
READING_KINDS = ("wav16", "wav8", "wavf", "csv", "csv_time", "npy", "npy2", "npz", "mat", "uff")
YAML_KINDS = ("machine", "sidecar", "site")
SEED_KINDS = READING_KINDS + YAML_KINDS
SUFFIX = {"wav16": ".wav", "wav8": ".wav", "wavf": ".wav", "csv": ".csv", "csv_time": ".csv", "npy": ".npy",
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


def write_reading(kind: str, path: Path, x: np.ndarray, fs: float = FS, unit: str = "g",
                  sidecar: bool = True) -> Path:
    """Save samples ``x`` (one or two dimensions) as a reading of ``kind``; returns the path."""
    x = np.asarray(x)
    if kind.startswith("wav"):
        _wav(path, x, fs, kind)
        if sidecar:
            peak = float(np.max(np.abs(x))) if x.size and np.isfinite(x).all() else 1.0
            _sidecar(path, {"unit": unit, "scale": (peak / 0.9) if kind != "wavf" and peak else 1.0})
    elif kind in ("csv", "csv_time"):
        cols = x.reshape(len(x), -1)
        names = [f"P{i + 1}H" for i in range(cols.shape[1])]
        if kind == "csv_time":
            body = "\n".join(",".join([repr(i / fs)] + [repr(float(v)) for v in row]) for i, row in enumerate(cols))
            path.write_text(f"# unit: {unit}\ntime_s," + ",".join(names) + "\n" + body + "\n")
        else:
            body = "\n".join(",".join(repr(float(v)) for v in row) for row in cols)
            path.write_text(f"# sample_rate_hz: {fs}\n# unit: {unit}\n" + ",".join(names) + "\n" + body + "\n")
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
        elif kind in ("csv", "csv_time"):
            cols = arr.reshape(arr.shape[0], -1) if arr.ndim >= 1 else arr.reshape(1, 1)
            body = "\n".join(",".join(str(v) for v in row) for row in cols)
            path.write_text(f"# sample_rate_hz: {fs}\n# unit: g\n" + body + "\n")
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


def strict_json(text: str):
    """Parse ``text`` as RFC 8259 JSON: NaN, Infinity and -Infinity are errors, as in strict parsers."""
    import json

    def refuse(token):
        raise ValueError(f"not RFC 8259 JSON: {token}")
    return json.loads(text, parse_constant=refuse)


__all__ = ["MACHINES", "READING_KINDS", "SEED_KINDS", "TOKENS", "ODD_VALUES", "YAML_KINDS", "dump_yaml",
           "mutate_bytes", "mutate_tree", "odd_array", "option_values", "random_command", "seed_signal",
           "strict_json", "write_array", "write_reading", "write_seed"]
