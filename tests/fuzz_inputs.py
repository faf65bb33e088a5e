"""Hypothesis strategies for fuzzing the input readers with structured-but-mutated inputs.

Each strategy draws a plausible file (a case, a Gerber, an Excellon file, a fabrication
folder or zip) from the grammar of its format, with numbers, names and keys sometimes
replaced by hostile values (NaN, inf, 1e300, integers of 400 digits, 1e-320, control
characters, unknown keys, wrong types), and then sometimes mutates the text itself (a slice
deleted, duplicated or overwritten with random bytes). The structure lets the fuzzing reach
the deep code (layout, macros, step and repeat, routing); the mutations reach the parsers'
error paths. Used by ``tests/test_fuzz_readers.py`` (2,000 examples per reader) and
``scripts/fuzz.py`` (as many as asked for).
"""
from __future__ import annotations

import os
import shutil
import zipfile
from pathlib import Path

from hypothesis import strategies as _st

from geometry.case import load_case
from geometry.formats import board, excellon, fabrication, gerber
from geometry.formats import read_artwork

# --------------------------------------------------------------------------- strategies, cached

def _freeze(v):
    if isinstance(v, (list, tuple)):
        return tuple(_freeze(x) for x in v)
    if isinstance(v, dict):
        return tuple((k, _freeze(x)) for k, x in v.items())
    return v


class _Cached:
    """``hypothesis.strategies`` whose strategies are built once per distinct argument list.

    The generators below name their strategies inline; building (and validating) a new
    strategy object at every draw made generation 5-10 times slower than the readers.
    """

    def __init__(self):
        self._cache = {}

    def _get(self, key, make):
        try:
            return self._cache[key]
        except KeyError:
            self._cache[key] = made = make()
            return made
        except TypeError:                    # an unhashable argument: build it each time
            return make()

    def __getattr__(self, name):
        real = getattr(_st, name)

        def build(*args, **kw):
            return self._get((name, _freeze(args), _freeze(kw)), lambda: real(*args, **kw))
        return build

    def composite(self, fn):
        factory = _st.composite(fn)

        def build(*args, **kw):
            return self._get((fn, _freeze(args), _freeze(kw)), lambda: factory(*args, **kw))
        return build


st = _Cached()

# --------------------------------------------------------------------------- values

HOSTILE_NUMBERS = [0, -0.0, -1, 1e-320, 5e-324, 1e-300, 1e-12, 1e300, 1e20, 1e8, -1e8, 2**63, 10**400,
                   -(10**30), float("nan"), float("inf"), -float("inf"), 1e-9, 3.0e6]
HOSTILE_VALUES = ["x", "", True, [], {}, [1, 2, 3], {"a": 1}, "\u0000", "\u001b[2J"]
HOSTILE_TEXT = ["", "\u0000", "A\u0007", "\u202e", "x" * 300, "../../etc", "a\nb", "\udcff", "C1.1", "Ω"]

sane = st.integers(-200, 200).map(lambda k: k / 20)
positive = st.integers(1, 100).map(lambda k: k / 50)
hostile_number = st.sampled_from(HOSTILE_NUMBERS)
hostile_value = st.sampled_from(HOSTILE_NUMBERS + HOSTILE_VALUES)


@st.composite
def _maybe(draw, good, bad, p_bad):
    return draw(bad) if draw(_PERMILLE) < p_bad * 1000 else draw(good)


_PERMILLE = st.integers(0, 999)


def maybe(good, bad=hostile_value, p_bad=0.08):
    """``good`` most of the time, ``bad`` with probability about ``p_bad``."""
    return _maybe(good, bad, p_bad)


def name(prefix):
    return maybe(st.integers(1, 4).map(lambda k: f"{prefix}{k}"), st.sampled_from(HOSTILE_TEXT), 0.05)


# --------------------------------------------------------------------------- mutation

@st.composite
def mutated(draw, text):
    """``text`` (a string, or a strategy of strings) as bytes, sometimes with one to three
    byte-level mutations."""
    if not isinstance(text, str):
        text = draw(text)
    data = bytearray(text.encode("utf-8", errors="surrogatepass"))
    for _ in range(draw(st.sampled_from([0, 0, 0, 0, 1, 1, 2, 3]))):
        if not data:
            break
        i = draw(st.integers(0, len(data) - 1))
        j = min(len(data), i + draw(st.integers(1, 40)))
        how = draw(st.sampled_from(["delete", "duplicate", "overwrite", "insert", "digit"]))
        if how == "delete":
            del data[i:j]
        elif how == "duplicate":
            data[i:i] = data[i:j] * draw(st.integers(1, 5))
        elif how == "overwrite":
            data[i:j] = draw(st.binary(min_size=j - i, max_size=j - i))
        elif how == "insert":
            data[i:i] = draw(st.sampled_from([b"\x00", b"\xff\xfe", b"9" * 30, b"-", b".", b"e999", b"%", b"*",
                                              b"\n", b"[[", b"]", b"=", b'"', b"\\u0000"]))
        else:
            data[i] = ord(draw(st.sampled_from("0123456789-.")))
    return bytes(data)


# --------------------------------------------------------------------------- TOML cases

def toml_value(v):
    """A Python value as TOML text (strings with JSON-style escapes, which TOML shares)."""
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, int):
        return str(v)
    if isinstance(v, float):
        return "nan" if v != v else ("inf" if v == float("inf") else "-inf" if v == -float("inf") else repr(v))
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
    """``{"title": ..., "layer": [dict, ...], "mesh": dict}`` as TOML text."""
    lines = [f"{k} = {toml_value(v)}" for k, v in doc.items() if not isinstance(v, (list, dict)) or k == "extends"]
    for k, v in doc.items():
        if isinstance(v, dict):
            lines.append(f"\n[{k}]")
            lines += [f"{a} = {toml_value(b)}" for a, b in v.items()]
        elif isinstance(v, list) and k != "extends":
            for item in v:
                lines.append(f"\n[[{k}]]")
                lines += [f"{a} = {toml_value(b)}" for a, b in item.items()]
    return "\n".join(lines) + "\n"


def point():
    return st.lists(maybe(sane), min_size=2, max_size=2)


def points(n_min, n_max):
    return maybe(st.lists(point(), min_size=n_min, max_size=n_max))


@st.composite
def shape(draw, kinds):
    kind = draw(st.sampled_from(kinds))
    if kind == "rect":
        return {"rect": draw(maybe(st.lists(maybe(sane), min_size=4, max_size=4)))}
    if kind == "polygon":
        out = {"polygon": draw(points(2, 7))}
        if draw(st.integers(0, 4)) == 0:
            out["holes"] = draw(maybe(st.lists(points(2, 5), max_size=2)))
        return out
    if kind == "circle":
        return {"circle": draw(maybe(st.fixed_dictionaries({"center": point(), "radius": maybe(positive)})))}
    return {"trace": draw(maybe(st.fixed_dictionaries({"path": points(1, 5), "width": maybe(positive)})))}


def _sometimes(draw, item, extra):
    """Drop a key or add an unknown or extra one now and then."""
    r = draw(st.integers(0, 39))
    if r == 0 and item:
        del item[draw(st.sampled_from(sorted(item)))]
    elif r == 1:
        item[draw(st.sampled_from(["bogus", "name", "remove", "layers", "artwork"]))] = draw(hostile_value)
    elif r == 2:
        item.update(extra)
    return item


@st.composite
def case_doc(draw):
    doc = {}
    if draw(st.booleans()):
        doc["units"] = draw(maybe(st.sampled_from(["mm", "mil", "um", "inch", "m"]), st.sampled_from(["cm", 3, ""])))
    if draw(st.integers(0, 9)) == 0:
        doc["title"] = draw(st.sampled_from(HOSTILE_TEXT))
    if draw(st.integers(0, 19)) == 0:
        doc["extends"] = draw(st.sampled_from(["base.toml", "case.toml", "nowhere.toml", "a\u0000b", "fifo"]))
    n_layers = draw(st.integers(1, 3))
    layer_names = [f"L{k + 1}" for k in range(n_layers)]
    layers = []
    for k, nm in enumerate(layer_names):
        la = {"name": nm, "z": draw(maybe(st.just(-1.0 * k))), "thickness": draw(maybe(st.just(0.035)))}
        if draw(st.integers(0, 5)) == 0:
            la["conductivity"] = draw(maybe(st.sampled_from([5.8e7, 1e6]), p_bad=0.5))
        if draw(st.integers(0, 7)) == 0:
            la["sublayers"] = draw(maybe(st.sampled_from(["auto", 1, 2]), p_bad=0.4))
        if draw(st.integers(0, 15)) == 0:
            la["artwork"] = draw(st.sampled_from(["top.gbr", "vias.drl", "missing.gbr", "fifo"]))
        layers.append(_sometimes(draw, la, {}))
    doc["layer"] = layers
    layer = maybe(st.sampled_from(layer_names), st.sampled_from(["L9", 1, ""]), 0.03)
    doc["copper"] = [_sometimes(draw, {"layer": draw(layer), **draw(shape(["rect", "rect", "polygon", "circle", "trace"])),
                                       **({"clear": draw(maybe(st.booleans()))} if draw(st.integers(0, 4)) == 0 else {})},
                                {"rect": [0, 0, 1, 1]})
                     for _ in range(draw(st.integers(0, 4)))]
    terms = []
    for k in range(draw(st.integers(0, 3))):
        t = {"name": draw(maybe(st.just(f"T{k}"), st.sampled_from(HOSTILE_TEXT), 0.03)), "layer": draw(layer),
             **draw(shape(["rect", "rect", "circle", "polygon"]))}
        terms.append(_sometimes(draw, t, {}))
    doc["terminal"] = terms
    tname = maybe(st.sampled_from([f"T{k}" for k in range(3)]), st.sampled_from(["Z", 5]), 0.03)
    doc["port"] = [_sometimes(draw, {"plus": draw(tname), "minus": draw(tname)}, {})
                   for _ in range(draw(st.integers(0, 2)))]
    vias = []
    for _ in range(draw(st.integers(0, 3))):
        v = {"at": draw(point()), "drill": draw(maybe(st.just(0.3)))}
        if draw(st.integers(0, 3)) == 0:
            v["pad"] = draw(maybe(st.just(0.6)))
        if draw(st.integers(0, 3)) == 0:
            v["layers"] = draw(maybe(st.lists(st.sampled_from(layer_names), min_size=1, max_size=2)))
        if draw(st.integers(0, 3)) == 0:
            v["array"] = draw(maybe(st.fixed_dictionaries({
                "pitch": st.lists(maybe(st.sampled_from([1.0, -1.0, 0.5, 0.0])), min_size=2, max_size=2),
                "count": st.lists(maybe(st.integers(1, 4), st.sampled_from([0, 10**5, 10**9, 2.5])),
                                  min_size=2, max_size=2)})))
        vias.append(_sometimes(draw, v, {}))
    doc["via"] = vias
    if draw(st.integers(0, 5)) == 0:
        doc["lumped"] = [{"between": draw(st.lists(tname, min_size=2, max_size=2)),
                          "resistance": draw(maybe(st.just(1e-3), p_bad=0.3)),
                          "inductance": draw(maybe(st.just(1e-9), p_bad=0.3))}]
    if draw(st.integers(0, 3)) == 0:
        doc["sweep"] = draw(st.one_of(
            st.fixed_dictionaries({"frequencies": maybe(st.lists(maybe(st.sampled_from([0, 1e3, 1e6])), max_size=4))}),
            st.fixed_dictionaries({"start": maybe(st.just(1e3)), "stop": maybe(st.just(1e8)),
                                   "points": maybe(st.integers(1, 6))})))
    if draw(st.integers(0, 5)) == 0:
        doc["mesh"] = {"max_edge": draw(maybe(st.just(0.5))), "min_edge": draw(maybe(st.just(0.05)))}
    if draw(st.integers(0, 5)) == 0:
        doc["window"] = {"rect": draw(maybe(st.lists(maybe(sane), min_size=4, max_size=4)))}
    if draw(st.integers(0, 9)) == 0:
        doc["solver"] = {"method": draw(maybe(st.sampled_from(["auto", "dense", "fast"]))),
                         "tolerance": draw(maybe(st.just(1e-4)))}
    if draw(st.integers(0, 9)) == 0:
        doc["circuit"] = {"current": draw(maybe(st.just(10.0), p_bad=0.3)),
                          "rise_time": draw(maybe(st.just(1e-8), p_bad=0.3))}
    if draw(st.integers(0, 19)) == 0:
        doc["drill"] = [{"file": draw(st.sampled_from(["vias.drl", "top.gbr", "fifo", "missing.drl"]))}]
    if draw(st.integers(0, 29)) == 0:
        doc["fabrication"] = {"source": draw(st.sampled_from(["fab", "fab.zip", "fifo", "top.gbr"]))}
    return doc


case_bytes = mutated(case_doc().map(toml_text))

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

def _gnum(draw, digits):
    """A Gerber integer coordinate: sane (within 20 mm at 6 decimals) or hostile."""
    return draw(maybe(st.integers(-20_000_000, 20_000_000).map(str),
                      st.sampled_from(["9" * 30, "-" + "1" * 15, "", "+", "1.5", "100000000000000", "0" * 12,
                                       "9" * 5000]), 0.05))


def _gparam(draw):
    return draw(maybe(st.sampled_from(["0.5", "1", "0.25", "2", "0.1", "3", "1.5", "0"]),
                      st.sampled_from(["-1", "1e300", "999999999", "nan", "", "0.0000001", "1e-320", "4096"]), 0.1))


MACROS = [
    "%AMTH*7,0,0,$1,$2,$3,45*%",
    "%AMMO*6,0,0,$1,0.1,0.1,$2,0.05,$1,0*%",
    "%AMOC*4,1,3,0,0,$1,0,0,$2,0,0,0*%",
    "%AMCI*1,1,$1,0,0*1,0,$2,0,0*%",
    "%AMVL*20,1,$1,0,0,$2,$3,30*21,1,$1,$2,0,0,0*%",
    "%AMPO*5,1,$1,0,0,$2*$4=$1x2+$2/$3*22,1,$4,$1,0,0*%",
]


@st.composite
def gerber_text(draw):
    out = []
    a, b = draw(st.sampled_from([(4, 6), (3, 6), (2, 5), (6, 6)])), None
    n_int, n_dec = a
    if draw(st.integers(0, 19)):
        z = draw(maybe(st.just("L"), st.sampled_from(["T", "D", "", "X"]), 0.2))
        out.append(f"%FS{z}AX{n_int}{n_dec}Y{n_int}{n_dec}*%")
    if draw(st.integers(0, 19)):
        out.append(draw(maybe(st.sampled_from(["%MOMM*%", "%MOIN*%"]), st.sampled_from(["%MOCM*%", "G70*", "G71*"]))))
    if draw(st.booleans()):
        out.append(draw(st.sampled_from(["%TF.FileFunction,Copper,L1,Top*%", "G04 #@! TF.FileFunction,Copper,L2,Bot*",
                                         "%TF.FileFunction,Soldermask,Top*%", "%TF*%", "%TA.AperFunction,Conductor*%"])))
    macros = draw(st.lists(st.sampled_from(MACROS), max_size=2, unique=True))
    out += macros
    codes = []
    for k in range(draw(st.integers(1, 4))):
        code = 10 + k
        kind = draw(st.sampled_from(["C", "C", "R", "O", "P"] + [m[3:5] for m in macros]))
        n = {"C": 1, "R": 2, "O": 2, "P": 2, "TH": 3, "MO": 2, "OC": 2, "CI": 2, "VL": 3, "PO": 3}.get(kind, 1)
        n += draw(st.sampled_from([0, 0, 0, 1, -1]))
        params = "X".join(_gparam(draw) for _ in range(max(n, 0)))
        if kind == "P" and params:
            params = params.split("X")[0] + "X" + draw(st.sampled_from(["3", "6", "12", "2", "40"]))
        out.append(f"%ADD{code}{kind}" + (f",{params}" if params else "") + "*%")
        codes.append(code)
    for _ in range(draw(st.integers(0, 25))):
        op = draw(st.sampled_from(["select", "flash", "flash", "draw", "draw", "move", "arc", "region", "G01", "G02",
                                   "G03", "G74", "G75", "LP", "LM", "LR", "LS", "SR", "AB", "comment", "coord", "block_flash"]))
        if op == "select":
            out.append(f"D{draw(st.sampled_from(codes + [99, 3, 20]))}*")
        elif op in ("flash", "draw", "move", "coord"):
            d = {"flash": "D03", "draw": "D01", "move": "D02", "coord": ""}[op]
            out.append(f"X{_gnum(draw, n_int + n_dec)}Y{_gnum(draw, n_int + n_dec)}{d}*")
        elif op == "arc":
            out.append(f"X{_gnum(draw, 0)}Y{_gnum(draw, 0)}I{_gnum(draw, 0)}J{_gnum(draw, 0)}D01*")
        elif op == "region":
            pts = [f"X{_gnum(draw, 0)}Y{_gnum(draw, 0)}D01*" for _ in range(draw(st.integers(1, 5)))]
            out += ["G36*", f"X{_gnum(draw, 0)}Y{_gnum(draw, 0)}D02*", *pts]
            if draw(st.integers(0, 9)):
                out.append("G37*")
        elif op in ("G01", "G02", "G03", "G74", "G75"):
            out.append(op + "*")
        elif op == "LP":
            out.append(draw(st.sampled_from(["%LPC*%", "%LPD*%", "%LPX*%"])))
        elif op == "LM":
            out.append(draw(st.sampled_from(["%LMN*%", "%LMX*%", "%LMXY*%"])))
        elif op == "LR":
            out.append(f"%LR{draw(st.sampled_from(['0', '45', '90', '-30.5', '1e9', 'nan']))}*%")
        elif op == "LS":
            out.append(f"%LS{draw(st.sampled_from(['1', '0.5', '2', '0', '-1', '100000000']))}*%")
        elif op == "SR":
            nx = draw(maybe(st.integers(1, 4), st.sampled_from([0, 1000, 100000, 10**12]), 0.1))
            ny = draw(maybe(st.integers(1, 4), st.sampled_from([0, 1000, 100000]), 0.1))
            out.append(draw(st.sampled_from([f"%SRX{nx}Y{ny}I{_gparam(draw)}J{_gparam(draw)}*%", "%SR*%"])))
        elif op == "AB":
            out.append(draw(st.sampled_from(["%ABD30*%", "%AB*%", "%ABD5*%"])))
        elif op == "block_flash":
            out.append("D30*")
            out.append(f"X{_gnum(draw, 0)}Y{_gnum(draw, 0)}D03*")
        else:
            out.append(draw(st.sampled_from(["G04 hello*", "G04 #@! TO.N,GND*", "M01*", "G54D10*", "%IPPOS*%", "%IPNEG*%"])))
    if draw(st.integers(0, 9)):
        out.append("M02*")
    return "\n".join(out) + "\n"


gerber_bytes = mutated(gerber_text())


def run_gerber(data):
    import io
    return read_artwork(io.BytesIO(data), name="fuzz.gbr")


# --------------------------------------------------------------------------- Excellon

def _enum(draw, decimal):
    good = (st.integers(-20000, 20000).map(lambda k: f"{k / 1000:.3f}") if decimal
            else st.integers(-200000, 200000).map(str))
    return draw(maybe(good, st.sampled_from(["9" * 25, "1e5", "--1", "", ".", "1.2.3", "5000.0", "0" * 40,
                                             "99999999999"]), 0.05))


@st.composite
def excellon_text(draw):
    out = []
    unit = draw(st.sampled_from(["METRIC", "INCH"]))
    decimal = draw(st.booleans())
    if draw(st.integers(0, 9)):
        out.append("M48")
    if draw(st.integers(0, 3)) == 0:
        out.append(draw(st.sampled_from(["; #@! TF.FileFunction,Plated,1,2,PTH", "; #@! TF.FileFunction,NonPlated,1,4,NPTH",
                                         "; #@! TF.FileFunction,MixedPlating,1,999999999", "; #@! TF.FileFunction,Plated,²,3"])))
    if draw(st.integers(0, 3)) == 0:
        fmt = draw(maybe(st.sampled_from(["3:3", "2:4", "4:4"]), st.sampled_from(["3:400", "0:0", "12:12", "9:9"]), 0.3))
        out.append(f";FILE_FORMAT={fmt}")
    if draw(st.integers(0, 19)):
        extra = draw(st.sampled_from(["", ",LZ", ",TZ", ",TZ,000.000", ",LZ,00.0000", ",0000.00000000000", ",XX"]))
        out.append(unit + extra)
    for k in range(draw(st.integers(1, 3))):
        if draw(st.integers(0, 3)) == 0:
            out.append(draw(st.sampled_from([";TYPE=PLATED", ";TYPE=NON_PLATED", "; #@! TA.AperFunction,NonPlated,NPTH,ComponentDrill"])))
        out.append(f"T{k + 1}C{draw(maybe(st.sampled_from(['0.3', '0.8', '0.0']), st.sampled_from(['-1', '1e9', 'nan', '99999999.0', ''])))}")
    if draw(st.integers(0, 9)):
        out.append(draw(st.sampled_from(["%", "M95"])))
    for _ in range(draw(st.integers(0, 20))):
        op = draw(st.sampled_from(["T", "hit", "hit", "hit", "xonly", "repeat", "slot", "route", "G93", "G90", "G91",
                                   "M71", "M72", "G05", "other"]))
        if op == "T":
            out.append(f"T{draw(st.sampled_from([1, 2, 3, 0, 7]))}")
        elif op == "hit":
            out.append(f"X{_enum(draw, decimal)}Y{_enum(draw, decimal)}")
        elif op == "xonly":
            out.append(f"X{_enum(draw, decimal)}")
        elif op == "repeat":
            n = draw(maybe(st.integers(1, 5), st.sampled_from([0, 100000, 100001, 10**20]), 0.2))
            out.append(f"R{n}X{_enum(draw, decimal)}Y{_enum(draw, decimal)}")
        elif op == "slot":
            out.append(f"X{_enum(draw, decimal)}Y{_enum(draw, decimal)}G85X{_enum(draw, decimal)}Y{_enum(draw, decimal)}")
        elif op == "route":
            out += [f"G00X{_enum(draw, decimal)}Y{_enum(draw, decimal)}", "M15",
                    f"G01X{_enum(draw, decimal)}Y{_enum(draw, decimal)}", "M16", "G05"]
        elif op == "G93":
            out.append(f"G93X{_enum(draw, decimal)}Y{_enum(draw, decimal)}")
        elif op == "other":
            out.append(draw(st.sampled_from(["G02X1Y1", "M97,TEXT", "ICI,ON", "FMAT,2", "G81", "%"])))
        else:
            out.append(op)
    if draw(st.integers(0, 9)):
        out.append("M30")
    return "\n".join(out) + "\n"


excellon_bytes = mutated(excellon_text())


def run_excellon(data):
    import io
    from geometry.formats import read_drills
    return read_drills(io.BytesIO(data), name=draw_name_hint(data))


def draw_name_hint(data):
    """A drill-file name; the NPTH hint in the name is part of what the reader decides."""
    return "fuzz-NPTH.drl" if len(data) % 5 == 0 else "fuzz.drl"


# --------------------------------------------------------------------------- fabrication

FAB_NAMES = ["board-F_Cu.gbr", "board-B_Cu.gbr", "board-In1_Cu.gbr", "board-In999999_Cu.gbr", "top.gtl",
             "bottom.gbl", "inner.g2", "board.g99999999", "board-PTH.drl", "board-NPTH.drl", "sub/blind.drl",
             "README.txt", "../escape.gbr", "/abs.gbr", "x.zip"]


@st.composite
def fab_files(draw):
    """``{name: bytes}`` of a fabrication set: copper, drill files, junk."""
    files = {}
    for _ in range(draw(st.integers(1, 5))):
        nm = draw(st.sampled_from(FAB_NAMES))
        kind = draw(st.sampled_from(["copper", "copper", "drill", "gerber", "excellon", "junk"]))
        if kind == "copper":
            layer = draw(maybe(st.integers(1, 4), st.sampled_from([0, 10**15, 101, -1]), 0.1))
            side = draw(st.sampled_from(["Top", "Inr", "Bot"]))
            text = (f"%TF.FileFunction,Copper,L{layer},{side}*%\n%FSLAX46Y46*%\n%MOMM*%\n%ADD10R,2X1*%\nD10*\n"
                    f"X{draw(st.integers(0, 9)) * 1000000}Y500000D03*\nM02*\n")
            data = draw(mutated(text))
        elif kind == "drill":
            a, b = draw(st.sampled_from([("1", "2"), ("1", "4"), ("2", "3"), ("1", "9999999999"), ("x", "1")]))
            text = (f"M48\n; #@! TF.FileFunction,{draw(st.sampled_from(['Plated', 'NonPlated', 'MixedPlating']))},{a},{b},PTH\n"
                    "METRIC\nT1C0.3\n%\nT1\nX1.0Y0.5\nX3.0Y0.5\nM30\n")
            data = draw(mutated(text))
        elif kind == "gerber":
            data = draw(gerber_bytes)
        elif kind == "excellon":
            data = draw(excellon_bytes)
        else:
            data = draw(st.binary(max_size=200))
        files[nm] = data
    return files


@st.composite
def fab_source(draw):
    """``(kind, files, specials, zip_damage)`` describing a folder or a zip to build."""
    kind = draw(st.sampled_from(["folder", "zip"]))
    files = draw(fab_files())
    specials = draw(st.lists(st.sampled_from(["fifo", "dangling", "loop", "devnull", "dirlink", "subdir"]),
                             max_size=3, unique=True)) if kind == "folder" else []
    damage = draw(st.sampled_from([None, None, None, "truncate", "flip", "lie"])) if kind == "zip" else None
    seed = draw(st.integers(0, 2**16))
    return kind, files, specials, damage, seed


def build_fab(root, spec):
    """Lay ``spec`` (from :func:`fab_source`) out under ``root``; return the source path."""
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
            raw = raw[:seed % max(len(raw), 1)]
        elif damage == "flip" and raw:
            raw[seed % len(raw)] ^= 0xFF
        elif damage == "lie":
            at = raw.find(b"PK\x01\x02")
            if at >= 0:
                raw[at + 24:at + 28] = (seed % 50).to_bytes(4, "little")
        path.write_bytes(bytes(raw))
        return path
    folder = root / "fab"
    folder.mkdir()
    for nm, data in files.items():
        p = (folder / nm.lstrip("/").replace("..", "up"))
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


__all__ = ["case_bytes", "gerber_bytes", "excellon_bytes", "fab_source", "prepare_case_folder", "run_case",
           "run_gerber", "run_excellon", "build_fab", "run_fab", "gerber", "excellon"]
