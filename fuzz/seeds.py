#!/usr/bin/env python3
"""Writes the seed inputs of the fuzz corpora (run from fuzz/; then `cargo fuzz cmin`).

Formulas of the trade (saturation, logistic, rational, Gaussian, sums of
exponentials, power laws) and edge cases of the formula language.
"""
import os, struct

TRADE = [
    "a*x/(b+x)", "Vmax*x/(Km + x)", "a*(1 - exp(-b*x))", "a/(1 + exp(-b*(x - c)))",
    "a/(1+b*exp(-c*x))", "(a + b*x)/(1 + c*x)", "a*exp(-((x-b)/c)^2)", "a*exp(-(x-b)^2/(2*c^2))",
    "a*exp(-b*x) + c*exp(-d*x)", "a*exp(-b*x) + c", "a*x^b", "a*x**b", "a + b*log(x)",
    "log(y) = a + b*x", "sqrt(y) = a + b*x", "a*sin(b*x + c)", "a*tanh(b*x)", "a + b*x + c*x^2",
    "a*(1-exp(-b*x))^c", "a*x^b/(c^b + x^b)", "a*atan(b*x)", "a*cosh(b*x)", "y = a*abs(x - b)",
    "b1*(1-exp(-b2*t))", "a*exp(b*x)", "a*b*x", "a*x + 0*c", "sqrt(b - x)", "log(a*x)",
]
EDGE = [
    "1e308*x*a", ".5*a*x", "1e-400 + a*x", "1e999*a*x", "(-0)^-2*a+x", "a*x^-2", "-a^2*x", "2^-1*a*x",
    "a - -x", "a*-x", "-(-a)*x", "a+(b-c)*x", "a+(b+c)", "a-(b-c)", "a/(b/c)*x", "a^b^c*x",
    "((((((((((a*x))))))))))", "x+" * 60 + "a", "a*" * 60 + "x", "α*exp(-β*x)", "a·x", "ä*x + ℓ",
    "sin(cos(tan(asin(acos(atan(sinh(cosh(tanh(a*x)))))))))", "log10(a*x) + ln(b)", "pi*a*x + e",
    "exp", "a*(x", "a*x)", "a**", "=a*x", "y = = a", "a = x", "1..2*a*x", "1e+*a", "a b x", "",
    "\u00e9\u0301*x", "a*x\u0000", "x^0.5^0.5*a", "a^(x/0)", "0^a*x", "x^a", "(a*x)^3", "abs(a)*x",
]

def seed_dir(t):
    d = os.path.join("corpus", t)
    os.makedirs(d, exist_ok=True)
    return d

def write(t, name, data):
    with open(os.path.join(seed_dir(t), name), "wb") as f:
        f.write(data)

for i, s in enumerate(TRADE + EDGE):
    write("parse_formula", f"seed-{i:03}", s.encode())
write("parse_formula", "seed-invalid-utf8", b"a*\xff\xfex + b\xc3")

# differentiate: 4 points x 5 coordinate bytes (i8/16), mode byte 0 (text), text.
coords = [16, -16, 8, 0, 32, 0, 24, -8, 4, 48, 40, 2, -24, 12, 1, 5, 0, 16, -40, 80]
pre = struct.pack("20b", *coords) + b"\x00"
for i, s in enumerate(TRADE + EDGE):
    write("differentiate", f"seed-{i:03}", pre + s.replace("y = ", "").encode())

# fit_problem: mode 0, formula, newline, rows, cells (tag >= 16 then i16 LE in 1/256).
def cell(v):
    return b"\x10" + struct.pack("<h", int(round(v * 256)))

def fit_seed(formula, xs, ys, start, special=None):
    out = b"\x00" + formula.encode() + b"\n" + bytes([len(xs)])
    out += b"".join(cell(v) for v in xs) + b"".join(cell(v) for v in ys)
    out += b"".join(cell(v) for v in start)
    return out

xs = [0.5, 1, 2, 4, 8, 16, 32]
import math
fits = [
    ("a*x/(b+x)", [10 * x / (3 + x) for x in xs], [1, 1]),
    ("a*x/(b+x)", [2 * x + 1 for x in xs], [1, 1]),  # straight line: b runs away
    ("a*(1 - exp(-b*x))", [5 * (1 - math.exp(-0.3 * x)) for x in xs], [1, 1]),
    ("a/(1 + exp(-b*(x - c)))", [6 / (1 + math.exp(-(x - 4))) for x in xs], [1, 1, 1]),
    ("a*exp(-((x-b)/c)^2)", [3 * math.exp(-((x - 4) / 3) ** 2) for x in xs], [1, 2, 1]),
    ("a*exp(-b*x) + c", [4 * math.exp(-0.5 * x) + 1 for x in xs], [1, 1, 0]),
    ("a*b*x", [2 * x for x in xs], [1, 1]),
    ("a*exp(b*x)", [2 * math.exp(0.1 * x) for x in xs], [1, 20]),
    ("sqrt(b - x)*a", [math.sqrt(40 - x) for x in xs], [1, 10]),
    ("log(a*x)", [math.log(2 * x) for x in xs], [-1]),
    ("a*x^b", [3 * x ** 0.5 for x in xs], [1, 1]),
]
for i, (f, ys, st) in enumerate(fits):
    ys = [max(min(v, 127), -127) for v in ys]
    write("fit_problem", f"seed-{i:03}", fit_seed(f, xs, ys, st))
# Special cells: NaN, inf and zeros in the data (tag bytes below 16).
write("fit_problem", "seed-special", b"\x00a*exp(-b*x)\n\x05" + bytes([0, 2, 16, 0, 1, 3, 16, 0, 2, 16, 0, 4, 4, 16, 0, 3, 1, 16, 0, 2, 6, 7]))
