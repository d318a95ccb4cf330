"""A seeded generator of hostile-but-fair inputs: mutated designs and CSV files.

Every case is a :class:`Case`: the files to write into an empty folder, the command line to
run (paths relative to that folder) and the words one of the error lines must contain when
the case is refused (the key path or the file's role). The mutations follow issue 12: wrong
types, wrong and doubled units, out-of-range and non-finite values, missing and unknown keys
and sections, other TOML shapes, huge counts, and for CSV files wrong headers, units, cells,
rows, encodings and sizes. The generator is pure (``numpy.random.default_rng(seed)``), so a
failing case is reproduced by its name.

Common practice, no source: the mutation families are those of the issue's trial, not of a
published fuzzing corpus.
"""

from __future__ import annotations

import copy
import math
import tomllib
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import tomli_w

ROOT = Path(__file__).resolve().parents[1]
DESIGNS = sorted((ROOT / "designs").glob("*.toml"))
SCAN = ROOT / "designs" / "scan_synthetic.csv"
RESPONSE = ROOT / "tests" / "data" / "detector_response_invented.csv"


@dataclass
class Case:
    """One fuzz case: files to write, the argv to run, words a refusal must name."""

    name: str
    files: dict            # relative name -> str or bytes
    argv: list             # with "{dir}" where the folder goes
    names: tuple           # a refusal's lines must contain one of these (case-insensitive)
    design: str | None = None   # the design file's name when the case has one
    job: list | None = field(default=None)  # the cheap job to run when check passes


# --- small example designs (same keys, grids cut down so that a job takes seconds) ---------

def small(data: dict) -> dict:
    """A copy of a design's data with grids, counts and outputs cut down (same keys)."""
    d = copy.deepcopy(data)
    obs = d.get("observe", {})
    if isinstance(obs.get("freq"), list):
        obs["freq"] = obs["freq"][:2]
    for key, n in (("theta", 9), ("phi", 5)):
        if isinstance(obs.get(key), dict):
            obs[key]["points"] = n
    for section, key, n in (("plane", "x", 5), ("plane", "y", 5), ("budget", "ranges", 4),
                            ("cone", "lengths", 20)):
        table = d.get(section, {}).get(key)
        if isinstance(table, dict):
            table["points"] = n
    if "tolerance" in d:
        d["tolerance"]["trials"] = 20
    if "steering" in d:
        d["steering"]["band_points"] = 3
    if "receiver" in d:
        d["receiver"]["band_points"] = 3
    if "waveform" in d:
        d["waveform"].update(ranges=["1 m"], duration="10 ps", bandwidth="1 THz")
    if "split" in d:
        d["split"]["counts"] = [1, 2]
    d["outputs"] = {"formats": ["csv"]}
    return d


def examples() -> dict:
    """{file stem: small design data} of every example design under designs/."""
    return {p.stem: small(tomllib.loads(p.read_text())) for p in DESIGNS}


# --- value mutations -----------------------------------------------------------------------

_BAD_UNITS = ["deg deg", "%^2", "kg", "m/s", "sr", "1/s^2", "THz THz", "mm^2", "J", "W/cm^2",
              "parsec", "", "m m", "dB"]
_WEIRD = ["", " ", "nan", "inf", "-inf", "1e999 m", "1e-400 m", "0x10 m", "NaN THz", "--3 m",
          "3 m 4 m", "\u00b5m", "12\u00a0mm", "3,5 mm", "1e308 m", "x" * 2000]


def _leaves(d, prefix=()):
    """Every (path, value) of scalars and lists in nested tables and arrays of tables."""
    out = []
    for k, v in d.items():
        path = prefix + (k,)
        if isinstance(v, dict):
            out += _leaves(v, path)
        elif isinstance(v, list) and v and all(isinstance(i, dict) for i in v):
            for i, item in enumerate(v):
                out += _leaves(item, path + (i,))
        else:
            out.append((path, v))
    return out


def _get_parent(d, path):
    for p in path[:-1]:
        d = d[p]
    return d


def _names(path):
    """Words a refusal of a change at ``path`` may name: each key of the path."""
    return tuple(str(p) for p in path if not isinstance(p, int))


def _mutate_value(rng, value):
    """A wrong value for a leaf: another type, a bad unit, out of range, non-finite."""
    choice = rng.integers(12)
    if choice == 0:
        return [True, {"a": 1}, [1, [2]], "text", 7][rng.integers(5)]
    if choice == 1 and isinstance(value, str) and " " in value:
        num, unit = value.split(" ", 1)
        return f"{num} {_BAD_UNITS[rng.integers(len(_BAD_UNITS))]}"
    if choice == 2 and isinstance(value, str) and " " in value:
        num, unit = value.split(" ", 1)
        return f"{num} {unit} {unit}"
    if choice == 3:
        return _WEIRD[rng.integers(len(_WEIRD))]
    if choice == 4 and isinstance(value, str) and " " in value:
        num, unit = value.split(" ", 1)
        scale = 10.0 ** int(rng.choice([-300, -30, -12, -6, 6, 12, 30, 300]))
        try:
            return f"{float(num) * scale:g} {unit}"
        except ValueError:
            return f"-{value}"
    if choice == 5:
        return [math.nan, math.inf, -math.inf, -0.0, 1e308, -1e308, 5e-324][rng.integers(7)]
    if choice == 6 and isinstance(value, (int, float)) and not isinstance(value, bool):
        return value * 10.0 ** int(rng.choice([-300, -20, 20, 300])) * int(rng.choice([-1, 1]))
    if choice == 7 and isinstance(value, list):
        return [] if rng.random() < 0.3 else value * int(rng.integers(2, 5))
    if choice == 8 and isinstance(value, list) and value:
        return value[:1] if len(value) > 1 else value + value
    if choice == 9 and isinstance(value, int) and not isinstance(value, bool):
        return int(rng.choice([-1, 0, 10**9, 10**12, 2**63 - 1, -(2**63)]))
    if choice == 10 and isinstance(value, str):
        return value.upper() if rng.random() < 0.5 else value + "x"
    if choice == 11 and isinstance(value, list):
        return [[v] for v in value] if rng.random() < 0.5 else [str(v) for v in value]
    return ["1 m", -1, 0, "0 THz", "-5 deg", 1e6, [0, 0, 0], "1e20 THz"][rng.integers(8)]


_HUGE = [("observe", "theta", "points", 10**9), ("observe", "phi", "points", 10**8),
         ("plane", "x", "points", 10**7), ("budget", "ranges", "points", 10**8),
         ("cone", "lengths", "points", 10**9), ("tolerance", "trials", None, 10**12),
         ("tolerance", "trials", None, 10**6), ("steering", "band_points", None, 10**6),
         ("receiver", "band_points", None, 10**7), ("layout", "count", None, 10**7),
         ("layout", "shape", None, [10**4, 10**4]), ("layout", "rings", None, 10**5),
         ("split", "counts", None, [10**6]), ("waveform", "duration", None, "1 s"),
         ("plane", "y", "points", 4000), ("observe", "freq", "points", 10**6)]


def _extreme(rng, d):
    """Set one quantity of the design to the low or high end of its schema range (SI)."""
    from thzarray.app.design.schema import SCHEMA
    from thzarray.app.units import DIMENSIONS

    spots = []
    for section, table in d.items():
        if section not in SCHEMA or not isinstance(table, dict):
            continue
        for key, value in table.items():
            spec = SCHEMA[section].get(key)
            if spec is None or spec.low is None or spec.high is None:
                continue
            sub = spec.kind.split(":")[-1]
            if sub in DIMENSIONS or sub == "number":
                spots.append((section, key, spec, value))
    section, key, spec, value = spots[rng.integers(len(spots))]
    low = spec.low if not spec.low_open else spec.low + max(abs(spec.low) * 1e-12, 1e-300)
    end = float(low if rng.random() < 0.5 else spec.high)
    if isinstance(value, dict):  # a grid: both ends, or a single point at the end
        new = {"start": end, "stop": end, "points": 1}
    elif isinstance(value, list):
        new = [end] * len(value) if not spec.kind.startswith("vector") else \
            [end if j == rng.integers(3) else 0.0 for j in range(3)]
    else:
        new = end
    d[section][key] = new
    return (section, key), new


def design_cases(stem, data, rng, n):
    """``n`` mutated copies of one small example design."""
    cases = []
    leaves = _leaves(data)
    sections = [s for s in data if isinstance(data[s], dict)]
    for i in range(n):
        d = copy.deepcopy(data)
        kind = i % 9
        text = None
        if kind == 8:  # an extreme value the schema accepts (its low or high bound, in SI)
            path, value = _extreme(rng, d)
            names = _names(path)
            what = f"extreme {'.'.join(map(str, path))}"
        elif kind in (0, 1, 2):  # a wrong value at a leaf
            path, value = leaves[rng.integers(len(leaves))]
            _get_parent(d, path)[path[-1]] = _mutate_value(rng, value)
            names = _names(path)
            what = f"value {'.'.join(map(str, path))}"
        elif kind == 3:  # a missing key or section
            if rng.random() < 0.7:
                path, _ = leaves[rng.integers(len(leaves))]
                del _get_parent(d, path)[path[-1]]
                names, what = _names(path), f"missing {'.'.join(map(str, path))}"
            else:
                s = sections[rng.integers(len(sections))]
                del d[s]
                names, what = (s, "filament", "layout", "observe", "design"), f"missing [{s}]"
        elif kind == 4:  # an unknown key or section
            s = sections[rng.integers(len(sections))]
            word = ["lenght", "Freq", "colour", "x" * 300, "name", "kind "][rng.integers(6)]
            if rng.random() < 0.5:
                d[s][word] = "1 m"
                names = (word[:30], s)
            else:
                d[word] = {"a": 1}
                names = (word[:30],)
            what = f"unknown {word[:10]}"
        elif kind == 5:  # another TOML shape
            s = sections[rng.integers(len(sections))]
            shape = rng.integers(4)
            if shape == 0:
                d[s] = [d[s]]
            elif shape == 1:
                d[s] = "table"
            elif shape == 2:
                key = next(iter(d[s]))
                d[s][key] = {"deep": {"er": {"still": [1, {"x": 2}]}}}
                names = (s, key)
            else:
                key = next(iter(d[s]))
                d[s][key] = [d[s][key]] * 3
                names = (s, key)
            names = names if shape >= 2 else (s,)
            what = f"shape [{s}] {shape}"
        elif kind == 6:  # a huge count
            sec, key, sub, value = _HUGE[rng.integers(len(_HUGE))]
            table = d.setdefault(sec, {}) if sec in d else None
            if table is None:
                sec, key, sub, value = "observe", "theta", "points", 10**9
                table = d["observe"]
            if sub is None:
                table[key] = value
            else:
                if not isinstance(table.get(key), dict):
                    table[key] = {"start": "0 deg", "stop": "10 deg", "points": 2} \
                        if sec == "observe" else {"start": "1 m", "stop": "2 m", "points": 2}
                table[key][sub] = value
            names = (sec, key)
            what = f"huge {sec}.{key}"
        else:  # raw text: syntax, BOM, duplicate keys, deep nesting, a long name
            base = tomli_w.dumps(d)
            raw = rng.integers(6)
            if raw == 0:
                text = "\ufeff" + base
                names, what = ("design",), "BOM"
            elif raw == 1:
                text = base + "\n[design]\nname = 'again'\n"
                names, what = ("design", "toml"), "duplicate table"
            elif raw == 2:
                text = base.replace("=", "==", 1)
                names, what = ("toml",), "syntax"
            elif raw == 3:
                text = "x = " + "[" * 5000 + "]" * 5000 + "\n" + base
                names, what = ("toml", "x"), "deep nesting"
            elif raw == 4:
                text = base.replace(f'name = "{d["design"]["name"]}"',
                                    'name = "' + "N" * 1_000_000 + '"')
                names, what = ("design.name", "name"), "long name"
            else:
                text = base + "\n[[medium]]\nkind = 'air'\n"
                names, what = ("medium", "toml"), "[[medium]]"
        cases.append(Case(f"{stem}#{i} {what}", {"design.toml": text if text is not None
                                                 else tomli_w.dumps(d)},
                          ["check", "{dir}/design.toml"], tuple(names), "design.toml"))
    return cases


# --- CSV mutations ---------------------------------------------------------------------------

LAYOUT_CSV = "x_mm,y_mm,z_m,delay_ps,length_cm\n0,0,0,0,3\n1.5,0,0,0.1,3\n0,1.5,0,0.2,3\n"
LAYOUT_DESIGN = {"design": {"name": "csv layout"}, "medium": {"relative_humidity": "40 %"},
                 "layout": {"kind": "csv", "csv": "columns.csv"},
                 "steering": {"toward": ["8 deg", "0 deg"], "band": ["0.2 THz", "0.4 THz"],
                              "band_points": 3},
                 "observe": {"freq": ["0.3 THz"],
                             "theta": {"start": "0 deg", "stop": "20 deg", "points": 9},
                             "phi": {"start": "0 deg", "stop": "360 deg", "points": 5}},
                 "outputs": {"formats": ["csv"]}}
RESPONSE_DESIGN = {"design": {"name": "csv response"}, "filament": {"length": "10 cm"},
                   "receiver": {"kind": "broadband", "area": "1 mm^2",
                                "response_csv": "response.csv", "band_points": 5},
                   "budget": {"ranges": {"start": "1 m", "stop": "3 m", "points": 3}},
                   "observe": {"freq": ["0.3 THz"],
                               "theta": {"start": "0 deg", "stop": "20 deg", "points": 9},
                               "phi": {"start": "0 deg", "stop": "360 deg", "points": 5}},
                   "outputs": {"formats": ["csv"]}}


def _csv_mutation(rng, text: str) -> str | bytes:
    """A mutated CSV table: header, units, cells, rows, encoding, size."""
    lines = text.splitlines()
    head = next(i for i, ln in enumerate(lines) if ln and not ln.startswith("#"))
    rows = list(range(head + 1, len(lines)))
    kind = rng.integers(16)
    if kind == 0:
        lines[head] = lines[head].replace("_", "_x", 1)
    elif kind == 1:
        cols = lines[head].split(",")
        cols[rng.integers(len(cols))] = ["", "a_b_c", "x_parsec", "x_mm", "x_deg_deg"][
            rng.integers(5)]
        lines[head] = ",".join(cols)
    elif kind == 2 and rows:
        r = rows[rng.integers(len(rows))]
        cells = lines[r].split(",")
        cells[rng.integers(len(cells))] = ["nan", "inf", "-inf", "1e999", "", "x", "1e-400",
                                           "0x1p3", "1_000", "--1"][rng.integers(10)]
        lines[r] = ",".join(cells)
    elif kind == 3 and rows:
        r = rows[rng.integers(len(rows))]
        lines[r] = lines[r] + ",7"
    elif kind == 4 and rows:
        r = rows[rng.integers(len(rows))]
        lines[r] = lines[r].rsplit(",", 1)[0]
    elif kind == 5:
        lines = lines[:head + 1]
    elif kind == 6:
        return "\ufeff" + text
    elif kind == 7:
        return text.encode("utf-16")
    elif kind == 8:
        return b"\xff\xfe\x00garbage\x00"
    elif kind == 9:
        return ""
    elif kind == 10 and rows:
        lines += [lines[rows[-1]]] * int(rng.choice([1, 300_000]))
    elif kind == 11:
        lines.insert(head, "# freq = 0.3 THz" if rng.random() < 0.5 else "# range = -1 m")
    elif kind == 12 and rows:
        r = rows[rng.integers(len(rows))]
        cells = lines[r].split(",")
        j = rng.integers(len(cells))
        try:
            cells[j] = repr(float(cells[j]) * 10.0 ** int(rng.choice([-300, 300, 30])))
        except ValueError:
            cells[j] = "1e300"
        lines[r] = ",".join(cells)
    elif kind == 13:
        return text.replace(",", ";")
    elif kind == 14:
        return text.replace("\n", "\r\n")
    else:
        lines = lines[:head] + lines[head + 1:]
    return "\n".join(lines) + "\n"


def csv_cases(rng, n_layout, n_response, n_scan):
    """Mutated layout tables, detector responses and measured scans."""
    cases = []
    design = tomli_w.dumps(LAYOUT_DESIGN)
    for i in range(n_layout):
        cases.append(Case(f"layout.csv#{i}", {"design.toml": design,
                                               "columns.csv": _csv_mutation(rng, LAYOUT_CSV)},
                          ["check", "{dir}/design.toml"], ("layout", "csv", "columns"),
                          "design.toml", ["steer"]))
    design = tomli_w.dumps(RESPONSE_DESIGN)
    response = RESPONSE.read_text()
    for i in range(n_response):
        cases.append(Case(f"response.csv#{i}", {"design.toml": design,
                                                 "response.csv": _csv_mutation(rng, response)},
                          ["check", "{dir}/design.toml"], ("receiver", "response"),
                          "design.toml", ["budget"]))
    scan = SCAN.read_text()
    for i in range(n_scan):
        cases.append(Case(f"scan.csv#{i}", {"scan.csv": _csv_mutation(rng, scan)},
                          ["fit", "{dir}/scan.csv"], ("scan", "freq", "range", "angle",
                                                      "signal", "sigma", "line", "column")))
    return cases


def corpus(seed: int = 12, per_design: int = 45) -> list:
    """Every case: ``per_design`` mutations of each example design, then the CSV files."""
    rng = np.random.default_rng(seed)
    cases = []
    for stem, data in examples().items():
        cases += design_cases(stem, data, rng, per_design)
    cases += csv_cases(rng, 40, 20, 40)
    return cases


# Cheapest job that uses a section (the job run on a case whose check passes).
JOB_OF_SECTION = {"plane": "map", "budget": "budget", "receiver": "budget",
                  "waveform": "waveform", "tolerance": "tolerance", "split": "split",
                  "bench": "bench", "steering": "compare", "calibration": "pattern"}


def cheap_job(case: Case, design) -> str:
    """The command to run on a case whose check passed: the one that uses the mutated
    section when the design has what it needs, else ``pattern``."""
    from thzarray.app.commands.gallery import jobs_for

    if case.job:
        return case.job[0]
    possible = {job.__name__.removeprefix("cmd_") for job in jobs_for(design)}
    section = case.name.split(" ", 2)[-1].split(" ")[0].split(".")[0].strip("[]")
    job = JOB_OF_SECTION.get(section, "pattern")
    return job if job in possible else "pattern"
