#!/usr/bin/env python3
"""Writes docs/errors.md: every error code with an example and the message
ohmsheet prints for it. Run from the repository root after `cargo build`:

    python3 docs/gen_errors.py > docs/errors.md

The examples are the catalogue's content; tests/errors_catalogue.rs runs
each `ohm` example and checks it yields its code, and checks that every
code in src/diag.rs has an entry.
"""
import os
import subprocess
import sys
import tempfile

EXE = os.environ.get("OHMSHEET", "target/debug/ohmsheet")

# (code, what it means, example sheet or None, note for non-sheet cases)
ENTRIES = [
    ("not-utf8", "The file is not UTF-8 text.", None,
     "A sheet file containing the byte 0xFF: `printf 'x = 1\\xff\\n' > bad.ohm`."),
    ("line-too-long", "A line longer than 10,000 bytes.", None,
     "A generated line of 10,001 characters."),
    ("nesting-too-deep", "Brackets nested more than 64 deep, or a formula tree more than 500 deep.", None,
     "`x = ((((…1…))))` with 65 pairs of brackets."),
    ("syntax", "The line does not follow the grammar.", "x = (1 + 2\n", None),
    ("empty-sheet", "The sheet has no definitions.", "# nothing but a comment\n", None),
    ("bare-expression", "A sheet line is an expression without a name.", "2 * 3\n", None),
    ("network-block", "A network block without its `end`, or an `end` with no block open.",
     "network feed at 50 Hz\n  R = branch(a, ground, 1 Ω)\n", None),
    ("network-element", "A line inside a network block that is not an element, an element form outside a block, "
     "or an element's value of the wrong unit.", "network feed at 50 Hz\n  x = 5 Ω\nend\n", None),
    ("network-shape", "A network whose shape leaves its equations without a solution whatever the values: a node with no "
     "path to ground, nodes hanging on current sources, a loop of ideal voltage sources, or no elements.",
     "network feed at 50 Hz\n  E1 = emf(a, ground, 1 V)\n  E2 = emf(a, ground, 2 V)\nend\n", None),
    ("network-too-large", "A network with more than 10,000 nodes besides `ground`, or more than 20,000 elements "
     "(docs/limits.md).", None, "A generated network block of 10,001 branches in a chain."),
    ("bad-number", "A number beyond the range of a double once its prefix and unit scale it to SI units: too large, "
     "or so small it would read as 0; or a unit whose scale is beyond a double (see docs/limits.md).", "x = 1e999\n", None),
    ("unknown-unit", "A unit word the table does not know.", "R = 20 ohms\n", None),
    ("ambiguous-unit", "`m` alone after a space: milli or metres?", "x = 5 m\n", None),
    ("unit-not-allowed", "A unit after a bracket that already has a dimension.", "V = 5 V\nx = (V) kV\n", None),
    ("reserved-name", "A cell named `j`, `pi` or `check`.", "pi = 3.14\n", None),
    ("duplicate-cell", "A name defined twice.", "x = 1\nx = 2\n", None),
    ("unknown-name", "A name that no cell defines.", "Vsource = 5 V\nI = Vsorce / 2 Ω\n", None),
    ("unknown-function", "A call of a function that does not exist.", "x = sqr(4)\n", None),
    ("unknown-field", "A record has no field of that name.", "p = parts(3 + j4)\nx = p.phase\n", None),
    ("cycle", "Cells that depend on themselves.", "a = b + 1\nb = 2 * a\n", None),
    ("too-many-cells", "More than 2,000,000 cells in one sheet.", None, "A generated sheet."),
    ("dimension-mismatch", "Quantities of different dimensions added, compared or shown in the wrong unit.",
     "x = 5 V + 3 Ω\n", None),
    ("network-operand", "`||` or `--` applied to something that is not an element.", "x = 5 V || 3 V\n", None),
    ("bad-exponent", "A power that gives no whole SI dimension, or a dimensioned exponent.",
     "x = (2 Ω)^0.3\n", None),
    ("function-args", "Wrong number or units of arguments.", "x = sqrt(5 V)\n", None),
    ("angle-ambiguous", "An angle mixed with a plain number (degrees or radians?).", "x = arg(1 + j) + 10\n", None),
    ("ambiguous-operators", "Operators side by side that a reader could group two ways: more than one value as the "
     "angle of `∠`, `||` and `--` mixed, a minus before the left side of `||` or `--` or before a power, chained "
     "powers or comparisons. The hint writes out both bracketings.", "Vp = 230 V\nV = Vp ∠ 120° * 2\n", None),
    ("kind-mismatch", "Quantities of one dimension but different kinds combined where the result would be "
     "misread: a real or reactive power added to a reactive power (`P + Q`; write `P + j*Q`), an imaginary "
     "value in W or var, dB with % or pu, Hz with rad/s. A value given to an input of another kind "
     "(`--set`, `--vary`, a cases column) is refused the same way.",
     "P = 800 kW\nQ = 600 kvar\nS = P + Q\n", None),
    ("trig-radians", "A note, not an error: `sin`, `cos` or `tan` given a plain whole number larger than 2π "
     "(`cos(30)`), which the language reads as radians. The sheet runs and the exit status is unchanged; the "
     "note shows `warning[trig-radians]` and the fix (`cos(30°)`, or `cos(30 rad)` to keep radians).", None,
     "`x = cos(30)` runs, and prints a `warning[trig-radians]` note saying it takes 30 as radians (about 1719°)."),
    ("broken-cell", "A reference (an `@sweep` series, a session expression) to a cell that has no value because "
     "its formula, or one it uses, has an error. The message names that error and its line; correct it first.",
     "Vs = 480 V\nZ = 3 + j4 Ω\nI = Vs / Z\n@sweep \"Load current\" Vs = 400 V .. 500 V, 3 points : I\n", None),
    ("not-a-record", "`.field` on a single value.", "z = 3\nx = z.re\n", None),
    ("record-as-value", "A record used where one value is needed.", "p = parts(3 + j4)\nx = p * 2\n", None),
    ("bad-tolerance", "A check's tolerance without the unit of the values compared; or a check `over N % of "
     "samples` with N not above 0 % and at most 100 %.",
     "Z = 5 Ω\ncheck Z ~= 5 Ω +- 0.1\n", None),
    ("tolerance-not-on-input", "A tolerance (`within …`, `among …`) on a cell computed from other cells: only "
     "an input's value can vary (docs/tolerances.md).",
     "Vs = 400 V within 5 %\nVb = Vs * 2 within 5 %\n", None),
    ("bad-input-tolerance", "An input's tolerance that cannot be read as a band: the stated value outside it "
     "(`within 2 % .. 5 %`), a negative half-width, a band taking the magnitude below zero, a % at one end and "
     "a unit at the other, an angle band on a real power or frequency, `normal` on a lopsided band or with "
     "K ≤ 0, or an amount that names a cell.",
     "Qc = 600 kvar within 2 % .. 5 %\n", None),
    ("tolerance-unit", "An input's tolerance in a unit that does not fit the input (kW for a kvar input, a "
     "plain number for volts), or an angle band not in degrees or radians.",
     "P = 1.2 MW within 50 kvar\n", None),
    ("no-tolerances", "`ohmsheet spread` on a sheet that states no tolerance on any input, or with nothing to "
     "analyse.", None,
     "`ohmsheet spread feeder.ohm` where no input has `within …` or `among …` (tested in tests/spread.rs)."),
    ("unknown-directive", "An `@word` the language does not know.", "@titel \"Feeder 3\"\nx = 1\n", None),
    ("bad-directive", "A directive with a wrong value.", "@amplitude average\nx = 1\n", None),
    ("not-a-number", "A cell evaluated to NaN. When a function's argument lies outside its domain the "
     "message names the argument, its value and the range, on the argument (`q_pfc(P, 1.2, 0.95)`: "
     "argument `pf1` = 1.2 is out of range: a power factor lies within −1 … +1); otherwise it names "
     "where the NaN first appeared. `run`, `check`, `report`, `watch`, sweeps, the session and the "
     "batch errors file say the same.",
     "a = 0 V\nb = a / a\n", None),
    ("infinite-value", "A current, voltage, power, plain ratio or level came out infinite: it has no physical "
     "reading. The message names the operation where the infinity was born — a division by zero with the "
     "divisor's value, a function at its pole with its domain's reason, or the open or short element the "
     "cell uses — on that operation, once for a chain of cells. An infinite impedance or admittance is an "
     "element, not an error (see `infinite-element`).",
     "V = 10 V\nR = 0 Ω\nI = V / R\n", None),
    ("infinite-element", "A warning, not an error: an impedance or admittance is infinite — an open (∞ Ω) or "
     "a short (∞ S), which `||`, `--` and the network functions take to its limit. It says which, and where "
     "it came from, in the cell where it was born; the run goes on and exits 0.", None,
     "`Zc = z_cap(0 F, 50 Hz)` runs, and prints `warning[infinite-element]: `Zc` is -j∞ Ω, an open (infinite "
     "impedance): `z_cap(C = 0 F, f = 50 Hz)` is infinite there`."),
    ("bad-override", "`--set` names no cell, or is not `NAME=EXPR`; or an `@override` line names no value "
     "of an included library sheet, overrides one twice, overrides its own sheet's value, or gives a value "
     "of another dimension than the library's.", None,
     "`ohmsheet run sheet.ohm --set Vx=240V` on a sheet without `Vx`; `@override Zx = 1 Ω` in a sheet whose "
     "libraries define no `Zx` (see docs/grammar.md, \"Local overrides\")."),
    ("bad-cases", "A column of a cases table (`ohmsheet batch --cases`) names no input of the sheet, "
     "names a computed cell, or has a unit of the wrong dimension; or `--show` names no cell.", None,
     "`ohmsheet batch sheet.ohm --cases cases.csv --out results.csv` where cases.csv has a column `Rx` "
     "and the sheet no input `Rx`; the message lists the sheet's inputs."),
    ("include-path", "An `@include` path that is absolute, leads out of the sheet's folder tree (by `../` "
     "or through a symbolic link) without `--allow-dir`, or names no file.",
     "@include \"/srv/shared/cables.ohm\"\nx = 1\n", None),
    ("include-cycle", "Library sheets that include each other.", None,
     "`a.ohm` has `@include \"lib/b.ohm\"` and `lib/b.ohm` has `@include \"../a.ohm\"`; "
     "the message shows the whole chain `a.ohm → lib/b.ohm → a.ohm`."),
    ("name-clash", "A name defined both in a sheet and in a sheet it includes (or in two included sheets).", None,
     "`feeder.ohm` includes `lib/cables.ohm`, and both define `Zc`; the message points at both definitions."),
    ("bad-range", "A sweep or search range that cannot be used: no `..`, an end in the wrong unit, "
     "a logarithmic range through zero, or a step of zero.",
     "C = 1 mF\nXc = 1 / (2*pi*60 Hz * C)\n@sweep C = 0 .. 2 mF, log : Xc\n", None),
    ("not-an-input", "A sweep or search varies a cell that is computed from other cells.",
     "V = 480 V\nR = 4 Ω\nI = V / R\n@sweep I = 0 .. 200 A : R\n", None),
    ("too-many-points", "A sweep of more points than the limit (10,000,000 unless `--max-points` says more).",
     "C = 1 mF\nXc = 1 / (2*pi*60 Hz * C)\n@sweep C = 1 µF .. 2 mF, 20000000 points : Xc\n", None),
    ("search-failed", "A search found no answer: the target is never reached in the range, is reached "
     "at several places, or the curve only jumps across it. The message says where it came closest or "
     "where the several answers lie. (`ohmsheet solve` exits 1 for this.)",
     "P = 400 kW\nQ = 320 kvar\nV = 480 V\nC = 1 mF\nf = 60 Hz\nQc = 2*pi*f*C*V^2 [kvar]\npf = P / abs(P + j*(Q - Qc))\n"
     "Cfix = C in 0 .. 1 mF where pf = 0.95\n", None),
    ("bad-search", "A search that cannot be set up: an expression that does not depend on the varied "
     "input, a range or target value that changes with it, or (`ohmsheet solve`) a target without `=`.",
     "C = 1 mF\nK = 5\nc = C in 0 .. 2 mF where K = 3\n", None),
    ("control-character", "A control character (ESC, NUL, U+009B …) or an invisible bidirectional control "
     "(U+202A–U+202E, U+2066–U+2069) in a sheet: it could drive the terminal the sheet is shown on, or make a "
     "formula display differently from how it computes. Tabs and line ends are fine.", None,
     "A sheet line `x = 1 # ` followed by the byte 0x1B (ESC), or a comment holding U+202E. Messages that quote "
     "such text show `?` in its place."),
    ("io", "The file cannot be read or written.", None, "`ohmsheet run missing.ohm`."),
]


def message(sheet):
    with tempfile.TemporaryDirectory() as d:
        path = os.path.join(d, "example.ohm")
        with open(path, "w", encoding="utf-8") as f:
            f.write(sheet)
        r = subprocess.run([EXE, "run", path], capture_output=True, text=True)
        return r.stderr.replace(path, "example.ohm").rstrip()


def main():
    out = ["# Error catalogue", "",
           "Every error ohmsheet reports has a stable code, shown in brackets after",
           "`error`. Each entry gives an example and the message it produces.",
           "Exit status is 2 for all of them.", ""]
    for code, what, sheet, note in ENTRIES:
        out.append(f"## {code}")
        out.append("")
        out.append(what)
        out.append("")
        if sheet is not None:
            out.append("```ohm")
            out.append(sheet.rstrip())
            out.append("```")
            out.append("")
            out.append("```text")
            out.append(message(sheet))
            out.append("```")
        else:
            out.append(f"Example: {note}")
        out.append("")
    sys.stdout.write("\n".join(out))


if __name__ == "__main__":
    main()
