"""Structured-but-mutated inputs for fuzzing the readers, and the calls that read them.

Each generator builds a plausible file from the grammar of its format (a case, a Gerber, an
Excellon file, a fabrication folder or zip), with numbers, names and keys sometimes replaced
by hostile values (NaN, inf, 1e300, integers of 400 digits, 1e-320, control characters,
unknown keys, wrong types); hypothesis then applies a list of byte mutations to the text (a
slice deleted, duplicated or overwritten with random bytes). The structure reaches the deep
code (layout, macros, step and repeat, routing); the mutations reach the parsers' error
paths.

Hypothesis draws the seed of the structure and the mutations. Drawing the whole structure
through hypothesis strategies cost 15-20 ms per example (100-300 draws, measured), several
times the readers' own time; a seeded ``random.Random`` builds it in well under 1 ms, and the
mutations (few draws) still shrink. Used by ``tests/test_fuzz_readers.py`` and
``scripts/fuzz.py``.
"""
from __future__ import annotations

import io
import os
import random
import shutil
import zipfile
from pathlib import Path

from hypothesis import strategies as st

from copperpath.geometry.case import load_case
from copperpath.geometry.formats import board, fabrication, read_artwork, read_drills

HOSTILE_NUMBERS = [0, -0.0, -1, 1e-320, 5e-324, 1e-300, 1e-12, 1e300, 1e20, 1e8, -1e8, 2**63, 10**400,
                   -(10**30), float("nan"), float("inf"), -float("inf"), 1e-9, 3.0e6]
HOSTILE_VALUES = HOSTILE_NUMBERS + ["x", "", True, [], {}, [1, 2, 3], {"a": 1}, "\u0000", "\u001b[2J"]
HOSTILE_TEXT = ["", "\u0000", "A\u0007", "\u202e", "x" * 300, "../../etc", "a\nb", "\udcff", "C1.1", "Ω"]
INSERTS = [b"\x00", b"\xff\xfe", b"9" * 30, b"-", b".", b"e999", b"%", b"*", b"\n", b"[[", b"]", b"=", b'"',
           b"\\u0000", b"nan", b"1e400"]


class Gen(random.Random):
    """A seeded random source with the few choices the generators need.

    ``hostility`` scales every probability of a hostile value: 0 for half the inputs (clean
    structure, which reaches the layout and the geometry), up to 1.
    """

    def __init__(self, seed):
        super().__init__(seed)
        self.hostility = self.choice([0, 0, 0, 0.05, 0.2, 1.0])

    def chance(self, p):
        return self.random() < p

    def maybe(self, good, bad=HOSTILE_VALUES, p=0.08):
        """``good()`` (a callable or a value) most of the time, else a pick from ``bad``."""
        if self.random() < p * self.hostility:
            return self.choice(bad)
        return good() if callable(good) else good

    def sane(self):
        return self.randint(-200, 200) / 20

    def positive(self):
        return self.randint(1, 100) / 50

    def num(self):
        return self.maybe(self.sane)


# --------------------------------------------------------------------------- mutation

#: One mutation: (where, how, size or payload index), positions as fractions of the text.
mutation = st.tuples(st.floats(0, 1), st.sampled_from(["delete", "duplicate", "overwrite", "insert", "digit"]),
                     st.integers(0, 40))
mutations = st.one_of(st.just([]), st.just([]), st.lists(mutation, min_size=1, max_size=3))


def mutate(data, muts):
    """Apply the mutations to ``data`` (bytes)."""
    data = bytearray(data)
    for where, how, k in muts:
        if not data:
            break
        i = min(int(where * len(data)), len(data) - 1)
        j = min(len(data), i + 1 + k)
        if how == "delete":
            del data[i:j]
        elif how == "duplicate":
            data[i:i] = data[i:j] * (1 + k % 5)
        elif how == "overwrite":
            data[i:j] = random.Random(k * 7919 + i).randbytes(j - i)
        elif how == "insert":
            data[i:i] = INSERTS[k % len(INSERTS)]
        else:
            data[i] = b"0123456789-."[k % 12]
    return bytes(data)


def inputs(make):
    """Hypothesis strategy of ``make(Gen(seed))`` (bytes) with drawn mutations applied."""
    return st.builds(lambda seed, muts: mutate(make(Gen(seed)), muts), st.integers(0, 2**32 - 1), mutations)


# --------------------------------------------------------------------------- TOML cases

def toml_value(v):
    """A Python value as TOML text (strings with escapes that TOML and JSON share)."""
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, int):
        return str(v)
    if isinstance(v, float):
        if v != v:
            return "nan"
        if v in (float("inf"), -float("inf")):
            return "inf" if v > 0 else "-inf"
        return repr(v)
    if isinstance(v, str):
        out = []
        for ch in v:
            if ch in '"\\':
                out.append("\\" + ch)
            elif ord(ch) < 32 or ord(ch) == 127 or 0xD800 <= ord(ch) <= 0xDFFF:
                out.append(f"\\u{ord(ch):04x}")
            else:
                out.append(ch)
        return '"' + "".join(out) + '"'
    if isinstance(v, list):
        return "[" + ", ".join(toml_value(x) for x in v) + "]"
    if isinstance(v, dict):
        return "{" + ", ".join(f"{k} = {toml_value(x)}" for k, x in v.items()) + "}"
    raise TypeError(type(v))


def toml_text(doc):
    """``{"units": ..., "layer": [dict, ...], "mesh": dict}`` as TOML text."""
    lines = [f"{k} = {toml_value(v)}" for k, v in doc.items() if not isinstance(v, (list, dict))]
    for k, v in doc.items():
        if isinstance(v, dict):
            lines.append(f"\n[{k}]")
            lines += [f"{a} = {toml_value(b)}" for a, b in v.items()]
        elif isinstance(v, list):
            for item in v:
                lines.append(f"\n[[{k}]]")
                lines += [f"{a} = {toml_value(b)}" for a, b in item.items()]
    return "\n".join(lines) + "\n"


def _point(g):
    return [g.num(), g.num()]


def _points(g, lo, hi):
    return g.maybe(lambda: [_point(g) for _ in range(g.randint(lo, hi))])


def _shape(g, kinds):
    kind = g.choice(kinds)
    if kind == "rect":
        return {"rect": g.maybe(lambda: [g.num() for _ in range(4)])}
    if kind == "polygon":
        out = {"polygon": _points(g, 2, 7)}
        if g.chance(0.2):
            out["holes"] = g.maybe(lambda: [_points(g, 2, 5) for _ in range(g.randint(0, 2))])
        return out
    if kind == "circle":
        return {"circle": g.maybe(lambda: {"center": _point(g), "radius": g.maybe(g.positive)})}
    return {"trace": g.maybe(lambda: {"path": _points(g, 2 - g.chance(0.1 * g.hostility), 5),
                                      "width": g.maybe(g.positive)})}


def _sometimes(g, item, extra=None):
    """Drop a key, or add an unknown or an extra one, now and then."""
    r = g.randint(0, 39) if g.hostility else 99
    if r == 0 and item:
        del item[g.choice(sorted(item))]
    elif r == 1:
        item[g.choice(["bogus", "name", "remove", "layers", "artwork"])] = g.choice(HOSTILE_VALUES)
    elif r == 2 and extra:
        item.update(extra)
    return item


def case_doc(g):
    """A case as a dict of tables (see :func:`toml_text`)."""
    doc = {}
    if g.chance(0.3):
        doc["units"] = g.maybe(lambda: g.choice(["mm", "mm", "um", "mil"]), ["cm", 3, "", "m", "inch"])
    if g.chance(0.1):
        doc["title"] = g.maybe("a title", HOSTILE_TEXT, 1)
    if g.chance(0.05 * g.hostility):
        doc["extends"] = g.choice(["base.toml", "case.toml", "nowhere.toml", "a\u0000b", "fifo"])
    names = [f"L{k + 1}" for k in range(g.randint(1, 3))]
    layers = []
    for k, nm in enumerate(names):
        la = {"name": nm, "z": g.maybe(-1.0 * k), "thickness": g.maybe(0.035)}
        if g.chance(0.15):
            la["conductivity"] = g.maybe(lambda: g.choice([5.8e7, 1e6]), p=0.5)
        if g.chance(0.12):
            la["sublayers"] = g.maybe(lambda: g.choice(["auto", 1, 2]), p=0.4)
        if g.chance(0.06 * g.hostility):
            la["artwork"] = g.choice(["top.gbr", "vias.drl", "missing.gbr", "fifo"])
        layers.append(_sometimes(g, la))
    doc["layer"] = layers

    def layer():
        return g.maybe(lambda: g.choice(names), ["L9", 1, ""], 0.03)

    def term():
        return g.maybe(lambda: g.choice(["T0", "T1", "T0", "T1", "T2"]), ["Z", 5], 0.03)
    length, width = g.randint(2, 40) / 2, g.randint(2, 10) / 2      # a strip on every layer
    doc["copper"] = [{"layer": nm, "rect": [0, 0, g.maybe(length), g.maybe(width)]} for nm in names]
    doc["copper"] += [_sometimes(g, {"layer": layer(), **_shape(g, ["rect", "rect", "polygon", "circle", "trace"]),
                                     **({"clear": g.maybe(g.chance(0.5))} if g.chance(0.2) else {})},
                                 {"rect": [0, 0, 1, 1]})
                      for _ in range(g.randint(0, 3))]
    ends = [[0, 0, 0.5, width], [length - 0.5, 0, length, width]]
    doc["terminal"] = [{"name": f"T{k}", "layer": g.choice(names), "rect": g.maybe(ends[k])} for k in range(2)]
    doc["terminal"] += [_sometimes(g, {"name": g.maybe(f"T{k}", HOSTILE_TEXT, 0.03), "layer": layer(),
                                       **_shape(g, ["rect", "rect", "circle", "polygon"])})
                        for k in range(2, 2 + g.chance(0.3))]
    doc["port"] = [{"name": "p", "plus": "T0", "minus": "T1"}]
    doc["port"] += [_sometimes(g, {"plus": term(), "minus": term()}) for _ in range(g.chance(0.2))]
    vias = []
    for _ in range(g.randint(0, 3)):
        v = {"at": g.maybe(lambda: [g.randint(0, int(length * 10)) / 10, width / 2]),
             "drill": g.maybe(lambda: g.choice([0.3, 0.2, 0.5]))}
        if g.chance(0.25):
            v["pad"] = g.maybe(0.6)
        if g.chance(0.25):
            v["layers"] = g.maybe(lambda: g.sample(names, g.randint(1, len(names))))
        if g.chance(0.25):
            v["array"] = g.maybe(lambda: {
                "pitch": [g.maybe(lambda: g.choice([1.0, -1.0, 0.6, 0.0])) for _ in range(2)],
                "count": [g.maybe(lambda: g.randint(1, 4), [0, 10**5, 10**9, 2.5], 0.2) for _ in range(2)]})
        vias.append(_sometimes(g, v))
    doc["via"] = vias
    if g.chance(0.15):
        doc["lumped"] = [{"between": [term(), term()], "resistance": g.maybe(1e-3, p=0.3),
                          "inductance": g.maybe(1e-9, p=0.3)}]
    if g.chance(0.25):
        if g.chance(0.5):
            doc["sweep"] = {"frequencies": g.maybe(lambda: [g.maybe(lambda: g.choice([0, 1e3, 1e6]))
                                                            for _ in range(g.randint(1, 4))])}
        else:
            doc["sweep"] = {"start": g.maybe(1e3), "stop": g.maybe(1e8), "points": g.maybe(lambda: g.randint(1, 6))}
    if g.chance(0.15):
        doc["mesh"] = {"max_edge": g.maybe(0.5), "min_edge": g.maybe(0.05)}
    if g.chance(0.15):
        x0, y0 = g.randint(-20, 20) / 4, g.randint(-20, 20) / 4
        doc["window"] = {"rect": g.maybe(lambda: [g.maybe(v) for v in (x0, y0, x0 + g.randint(1, 40) / 4,
                                                                        y0 + g.randint(1, 40) / 4)])}
    if g.chance(0.1):
        doc["solver"] = {"method": g.maybe(lambda: g.choice(["auto", "dense", "fast"])), "tolerance": g.maybe(1e-4)}
    if g.chance(0.1):
        doc["circuit"] = {"current": g.maybe(10.0, p=0.3), "rise_time": g.maybe(1e-8, p=0.3)}
    if g.chance(0.05 * g.hostility):
        doc["drill"] = [{"file": g.choice(["vias.drl", "top.gbr", "fifo", "missing.drl"])}]
    if g.chance(0.03 * g.hostility):
        doc["fabrication"] = {"source": g.choice(["fab", "fab.zip", "fifo", "top.gbr"])}
    return doc


def case_file(g):
    return toml_text(case_doc(g)).encode("utf-8", errors="surrogatepass")


#: Files beside the fuzzed case: a base to extend, small artwork, drill and fabrication data.
CASE_FILES = {
    "base.toml": '[[layer]]\nname = "L1"\nz = 0.0\nthickness = 0.035\n',
    "top.gbr": "%TF.FileFunction,Copper,L1,Top*%\n%FSLAX46Y46*%\n%MOMM*%\n%ADD10R,4X1*%\nD10*\nX2000000Y500000D03*\nM02*\n",
    "vias.drl": "M48\nMETRIC\nT1C0.3\n%\nT1\nX1.0Y0.5\nX3.0Y0.5\nM30\n",
}


def prepare_case_folder(folder):
    """Write :data:`CASE_FILES`, a ``fab`` folder, ``fab.zip`` and a FIFO into ``folder``."""
    folder = Path(folder)
    for nm, text in CASE_FILES.items():
        (folder / nm).write_text(text)
    (folder / "fab").mkdir(exist_ok=True)
    (folder / "fab" / "top.gbr").write_text(CASE_FILES["top.gbr"])
    (folder / "fab" / "vias.drl").write_text(CASE_FILES["vias.drl"])
    with zipfile.ZipFile(folder / "fab.zip", "w") as zf:
        zf.writestr("top.gbr", CASE_FILES["top.gbr"])
    if not (folder / "fifo").exists():
        os.mkfifo(folder / "fifo")


def run_case(folder, data):
    """Write ``data`` as ``folder/case.toml`` and load it."""
    path = Path(folder) / "case.toml"
    path.write_bytes(data)
    return load_case(path)


# --------------------------------------------------------------------------- Gerber

MACROS = [
    ("TH", 3, "%AMTH*7,0,0,$1,$2,$3,45*%"),
    ("MO", 2, "%AMMO*6,0,0,$1,0.1,0.1,$2,0.05,$1,0*%"),
    ("OC", 2, "%AMOC*4,1,3,0,0,$1,0,0,$2,0,0,0*%"),
    ("CI", 2, "%AMCI*1,1,$1,0,0*1,0,$2,0,0*%"),
    ("VL", 3, "%AMVL*20,1,$1,0,0,$2,$3,30*21,1,$1,$2,0,0,0*%"),
    ("PO", 3, "%AMPO*5,1,$1,0,0,$2*$4=$1x2+$2/$3*22,1,$4,$1,0,0*%"),
]
G_BAD_NUMBERS = ["9" * 30, "-" + "1" * 15, "", "+", "1.5", "100000000000000", "0" * 12, "9" * 5000]
G_PARAMS = ["0.5", "1", "0.25", "2", "0.1", "3", "1.5", "0"]
G_BAD_PARAMS = ["-1", "1e300", "999999999", "nan", "", "0.0000001", "1e-320", "4096"]


def _gnum(g):
    """A Gerber integer coordinate: within 20 mm at 6 decimals, or hostile."""
    return g.maybe(lambda: str(g.randint(-20_000_000, 20_000_000)), G_BAD_NUMBERS, 0.05)


def _gparam(g):
    return g.maybe(lambda: g.choice(G_PARAMS), G_BAD_PARAMS, 0.1)


def _xy(g, d=""):
    return f"X{_gnum(g)}Y{_gnum(g)}{d}*"


def gerber_text(g):
    out = []
    n_int, n_dec = g.choice([(4, 6), (3, 6), (2, 5), (6, 6)])
    if g.chance(0.95):
        z = g.maybe("L", ["T", "D", "", "X"], 0.5)
        out.append(f"%FS{z}AX{n_int}{n_dec}Y{n_int}{n_dec}*%")
    if g.chance(0.95):
        out.append(g.maybe(lambda: g.choice(["%MOMM*%", "%MOIN*%"]), ["%MOCM*%", "G70*", "G71*"]))
    if g.chance(0.5):
        out.append(g.maybe(lambda: g.choice(["%TF.FileFunction,Copper,L1,Top*%", "G04 #@! TF.FileFunction,Copper,L2,Bot*",
                                             "%TA.AperFunction,Conductor*%"]),
                           ["%TF.FileFunction,Soldermask,Top*%", "%TF*%"], 0.5))
    macros = g.sample(MACROS, g.randint(0, 2))
    out += [m[2] for m in macros]
    counts = {"C": 1, "R": 2, "O": 2, "P": 2, **{m[0]: m[1] for m in macros}}
    codes = []
    for k in range(g.randint(1, 4)):
        code, kind = 10 + k, g.choice(["C", "C", "R", "O", "P"] + [m[0] for m in macros])
        n = max(counts[kind] + g.maybe(0, [1, -1], 0.5), 0)
        params = [_gparam(g) for _ in range(n)]
        if kind == "P" and params:
            params = [params[0], g.maybe(lambda: g.choice(["3", "6", "12"]), ["2", "40", "3.5"], 0.5)]
        out.append(f"%ADD{code}{kind}" + (f",{'X'.join(params)}" if params else "") + "*%")
        codes.append(code)
    out.append(f"D{g.choice(codes)}*")
    for _ in range(g.randint(0, 25)):
        op = g.choice(["select", "flash", "flash", "draw", "draw", "move", "arc", "region", "G01", "G02", "G03",
                       "G74", "G75", "LP", "LM", "LR", "LS", "SR", "AB", "comment", "coord", "block_flash"])
        if op == "select":
            out.append(f"D{g.maybe(lambda: g.choice(codes), [99, 3, 20], 0.5)}*")
        elif op in ("flash", "draw", "move", "coord"):
            out.append(_xy(g, {"flash": "D03", "draw": "D01", "move": "D02", "coord": ""}[op]))
        elif op == "arc":
            out.append(f"X{_gnum(g)}Y{_gnum(g)}I{_gnum(g)}J{_gnum(g)}D01*")
        elif op == "region":
            out += ["G36*", _xy(g, "D02")] + [_xy(g, "D01") for _ in range(g.randint(1, 5))]
            if g.chance(0.9):
                out.append("G37*")
        elif op in ("G01", "G02", "G03", "G74", "G75"):
            out.append(op + "*")
        elif op == "LP":
            out.append(g.maybe(lambda: g.choice(["%LPC*%", "%LPD*%"]), ["%LPX*%"], 0.5))
        elif op == "LM":
            out.append(g.choice(["%LMN*%", "%LMX*%", "%LMXY*%"]))
        elif op == "LR":
            out.append(f"%LR{g.maybe(lambda: g.choice(['0', '45', '90', '-30.5']), ['1e9', 'nan'], 0.5)}*%")
        elif op == "LS":
            out.append(f"%LS{g.maybe(lambda: g.choice(['1', '0.5', '2']), ['0', '-1', '100000000'], 0.5)}*%")
        elif op == "SR":
            nx = g.maybe(lambda: g.randint(1, 4), [0, 1000, 100000, 10**12], 0.1)
            ny = g.maybe(lambda: g.randint(1, 4), [0, 1000, 100000], 0.1)
            out.append(g.choice([f"%SRX{nx}Y{ny}I{_gparam(g)}J{_gparam(g)}*%", "%SR*%"]))
        elif op == "AB":
            out.append(g.maybe(lambda: g.choice(["%ABD30*%", "%AB*%"]), ["%ABD5*%"], 0.5))
        elif op == "block_flash":
            out += ["D30*", _xy(g, "D03")]
        else:
            out.append(g.maybe(lambda: g.choice(["G04 hello*", "G04 #@! TO.N,GND*", "M01*", "G54D10*", "%IPPOS*%"]),
                               ["%IPNEG*%", "M03*"], 0.5))
    if g.chance(0.9):
        out.append("M02*")
    return "\n".join(out) + "\n"


def gerber_file(g):
    return gerber_text(g).encode()


def run_gerber(data):
    return read_artwork(io.BytesIO(data), name="fuzz.gbr")


# --------------------------------------------------------------------------- Excellon

E_BAD_NUMBERS = ["9" * 25, "1e5", "--1", "", ".", "1.2.3", "5000.0", "0" * 40, "99999999999"]


def _enum(g, decimal):
    if decimal:
        return g.maybe(lambda: f"{g.randint(-20000, 20000) / 1000:.3f}", E_BAD_NUMBERS, 0.05)
    return g.maybe(lambda: str(g.randint(-200000, 200000)), E_BAD_NUMBERS, 0.05)


def excellon_text(g):
    out = []
    unit, decimal = g.choice(["METRIC", "INCH"]), g.chance(0.5)

    def xy(prefix=""):
        return f"{prefix}X{_enum(g, decimal)}Y{_enum(g, decimal)}"
    if g.chance(0.9):
        out.append("M48")
    if g.chance(0.25):
        out.append(g.choice(["; #@! TF.FileFunction,Plated,1,2,PTH", "; #@! TF.FileFunction,NonPlated,1,4,NPTH",
                             "; #@! TF.FileFunction,MixedPlating,1,999999999", "; #@! TF.FileFunction,Plated,²,3"]))
    if g.chance(0.25):
        fmt = g.maybe(lambda: g.choice(["3:3", "2:4", "4:4"]), ["3:400", "0:0", "12:12", "9:9"], 0.3)
        out.append(f";FILE_FORMAT={fmt}")
    if g.chance(0.95):
        out.append(unit + g.maybe(lambda: g.choice(["", ",LZ", ",TZ", ",TZ,000.000", ",LZ,00.0000"]),
                                  [",0000.00000000000", ",XX"], 0.5))
    for k in range(g.randint(1, 3)):
        if g.chance(0.25):
            out.append(g.choice([";TYPE=PLATED", ";TYPE=NON_PLATED",
                                 "; #@! TA.AperFunction,NonPlated,NPTH,ComponentDrill"]))
        out.append(f"T{k + 1}C{g.maybe(lambda: g.choice(['0.3', '0.8', '0.0']), ['-1', '1e9', 'nan', '99999999.0', ''])}")
    if g.chance(0.9):
        out += [g.choice(["%", "M95"]), g.maybe("T1", ["T0", "T9"], 0.5)]
    for _ in range(g.randint(0, 20)):
        op = g.maybe(lambda: g.choice(["T", "hit", "hit", "hit", "xonly", "repeat", "slot", "route", "G93", "G90",
                                       "M71", "M72", "G05"]), ["G91", "other"], 0.5)
        if op == "T":
            out.append(f"T{g.maybe(lambda: g.choice([1, 2, 3]), [0, 7], 0.5)}")
        elif op == "hit":
            out.append(xy())
        elif op == "xonly":
            out.append(f"X{_enum(g, decimal)}")
        elif op == "repeat":
            out.append(xy(f"R{g.maybe(lambda: g.randint(1, 5), [0, 100000, 100001, 10**20], 0.2)}"))
        elif op == "slot":
            out.append(xy() + "G85" + xy())
        elif op == "route":
            out += [xy("G00"), "M15", xy("G01"), "M16", "G05"]
        elif op == "G93":
            out.append(xy("G93"))
        elif op == "other":
            out.append(g.choice(["G02X1Y1", "M97,TEXT", "ICI,ON", "FMAT,2", "G81", "%"]))
        else:
            out.append(op)
    if g.chance(0.9):
        out.append("M30")
    return "\n".join(out) + "\n"


def excellon_file(g):
    return excellon_text(g).encode()


def run_excellon(data):
    """Read drill data; every fifth input is named as a non-plated (NPTH) file."""
    return read_drills(io.BytesIO(data), name="fuzz-NPTH.drl" if len(data) % 5 == 0 else "fuzz.drl")


# --------------------------------------------------------------------------- fabrication

FAB_NAMES = ["board-F_Cu.gbr", "board-B_Cu.gbr", "board-In1_Cu.gbr", "board-In999999_Cu.gbr", "top.gtl",
             "bottom.gbl", "inner.g2", "board.g99999999", "board-PTH.drl", "board-NPTH.drl", "sub/blind.drl",
             "README.txt", "../escape.gbr", "/abs.gbr", "x.zip"]
SPECIALS = ["fifo", "dangling", "loop", "devnull", "dirlink", "subdir"]


def fab_spec(g):
    """``(kind, files, specials, damage, seed)``: a folder or zip to build with :func:`build_fab`."""
    files = {}
    for _ in range(g.randint(1, 5)):
        kind = g.choice(["copper", "copper", "drill", "gerber", "excellon", "junk"])
        if kind == "copper":
            layer = g.maybe(lambda: g.randint(1, 4), [0, 10**15, 101, -1], 0.1)
            data = (f"%TF.FileFunction,Copper,L{layer},{g.choice(['Top', 'Inr', 'Bot'])}*%\n%FSLAX46Y46*%\n"
                    f"%MOMM*%\n%ADD10R,2X1*%\nD10*\nX{g.randint(0, 9) * 1000000}Y500000D03*\nM02*\n").encode()
        elif kind == "drill":
            a, b = g.choice([("1", "2"), ("1", "4"), ("2", "3"), ("1", "9999999999"), ("x", "1")])
            data = (f"M48\n; #@! TF.FileFunction,{g.choice(['Plated', 'NonPlated', 'MixedPlating'])},{a},{b},PTH\n"
                    "METRIC\nT1C0.3\n%\nT1\nX1.0Y0.5\nX3.0Y0.5\nM30\n").encode()
        elif kind == "gerber":
            data = gerber_file(g)
        elif kind == "excellon":
            data = excellon_file(g)
        else:
            data = g.randbytes(g.randint(0, 200))
        if g.chance(0.3):
            data = mutate(data, [(g.random(), g.choice(["delete", "overwrite", "insert", "digit"]), g.randint(0, 40))])
        files[g.choice(FAB_NAMES)] = data
    kind = g.choice(["folder", "zip"])
    specials = g.sample(SPECIALS, g.randint(0, 3)) if kind == "folder" else []
    damage = g.choice([None, None, None, "truncate", "flip", "lie"]) if kind == "zip" else None
    return kind, files, specials, damage, g.randint(0, 2**16)


fab_specs = st.builds(lambda seed: fab_spec(Gen(seed)), st.integers(0, 2**32 - 1))


def build_fab(root, spec):
    """Lay ``spec`` (from :func:`fab_spec`) out under ``root``; return the source path."""
    kind, files, specials, damage, seed = spec
    root = Path(root)
    if root.exists():
        shutil.rmtree(root)
    root.mkdir(parents=True)
    if kind == "zip":
        path = root / "fab.zip"
        with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as zf:
            for nm, data in files.items():
                zf.writestr(nm, data)
        raw = bytearray(path.read_bytes())
        if damage == "truncate":
            raw = raw[:seed % len(raw)]
        elif damage == "flip":
            raw[seed % len(raw)] ^= 0xFF
        elif damage == "lie":
            at = raw.find(b"PK\x01\x02")
            raw[at + 24:at + 28] = (seed % 50).to_bytes(4, "little")
        path.write_bytes(bytes(raw))
        return path
    folder = root / "fab"
    folder.mkdir()
    for nm, data in files.items():
        p = folder / nm.lstrip("/").replace("..", "up")
        p.parent.mkdir(parents=True, exist_ok=True)
        p.write_bytes(data)
    for s in specials:
        target = folder / f"special-{s}.gbr"
        if s == "fifo":
            os.mkfifo(target)
        elif s == "dangling":
            os.symlink(folder / "nowhere", target)
        elif s == "loop":
            os.symlink(target, target)
        elif s == "devnull":
            os.symlink("/dev/null", target)
        elif s == "dirlink":
            os.symlink(root, folder / "up-link")
        else:
            (folder / "empty-dir").mkdir()
    return folder


def run_fab(source):
    """Scan a fabrication source and read everything it assigned (as the case reader does)."""
    fab = fabrication.scan(source)
    return board.fabrication_inputs(fab, ["L1", "L2", "L3", "L4"], plating=25e-6, annulus=0.3e-3)


case_inputs = inputs(case_file)
gerber_inputs = inputs(gerber_file)
excellon_inputs = inputs(excellon_file)
