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

# Regression (issue 10): a finite Jacobian near 1e225 (x^100 at x = 86) made
# the SVD of the polishing step overflow to NaN and panic.
write("fit_problem", "regress-huge-jacobian-svd", fit_seed(
    "p1+p2+p3*x^p4+p5+p6",
    [0.18359375, 10.3359375, 0, 10.3828125, 86.0390625, 86.3359375, 86.17578125, 43.4765625, 86.16796875],
    [86.3359375, 0.16796875, 0, 0, 0, 43.19921875, 43.16796875, 43.16796875, 21.16796875],
    [0, 0, 1, 100, 0, 0]))

# read_table: the whole input is the file's bytes (delimited text, or a workbook).
TABLES = [
    b"x,y\n1,2\n3,4.5\n", b"x\ty\n1\t2\n3\t4.5\n", b"x   y\n  1 2\n3\t 4.5  \n",
    b"hours,mass\n0,0.25\n2,\n4,1.5\n", b"t;y\n1;2\n", b"t,y\n1,2\n3\n", b"t y\n1 2 3\n",
    b"\xef\xbb\xbf# growth run\n\ntime, od\r\n# mid\n 0 , 0.01 \r\n\n1,0.03\r\n",
    b"\"time h\",\"a,b\",\"say \"\"hi\"\"\"\n1,\"2\",3\n", b"\"time h\" y\n1 2\n", b"\"x,y\n1,2\n",
    b"x,y\nNaN,1\n", b"x,y\n1,inf\n", b"x,y\n-Infinity,1\n", b"x,y\n1e999,1\n", b"x,y\n1e-400,5e-324\n",
    b"x,y\n1.7976931348623157e308,-0.0\n", b"x,y\n0x10,1_000\n", b"x,y\n+1.,.5\n", b"x,y\n1,abc\n",
    b"x," * 300 + b"z\n" + b"1," * 300 + b"2\n", b"x,,y\n1,2,3\n", b"x,x\n1,2\n", b"1,2\n3,4\n",
    b"", b"# only\n\n  \n", b"x,y\n\n# nothing\n", b"x\n\"\"\n1\n", b"x,y\n,\n1,\n",
    b"x,\xe9t\xe9\n1,2\n", b"x,y\n1\x00,2\n", b"x,y\r1,2\r3,4\r", b"x,y\n1,\"2\x0b3\"\n",
    b"a b\xc2\x85c\n1 2 3\n", b"x,y\n1,\"2\r3\"\n", b"\xce\xb1,\xce\xb2\n1,2\n", b"#x,y\n1,2\n",
    b"x\n1\n2\n3\n", b"nan,inf\n1,2\n", b"x y\n1\t2\n", b"x\t\ty\n1\t\t2\n", b" , \n1,2\n",
]
for i, t in enumerate(TABLES):
    write("read_table", f"seed-{i:03}", t)

import io, zipfile

def xlsx(rows_xml, sheets=("Data",), stored=True, dimension=None):
    """A minimal .xlsx: one worksheet part per sheet, all holding `rows_xml`."""
    buf = io.BytesIO()
    method = zipfile.ZIP_STORED if stored else zipfile.ZIP_DEFLATED
    with zipfile.ZipFile(buf, "w", method) as z:
        ns = 'xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main"'
        rel = "http://schemas.openxmlformats.org/officeDocument/2006/relationships"
        ct = ('<?xml version="1.0" encoding="UTF-8"?><Types xmlns="http://schemas.openxmlformats.org/package/2006/content-types">'
              '<Default Extension="rels" ContentType="application/vnd.openxmlformats-package.relationships+xml"/>'
              '<Default Extension="xml" ContentType="application/xml"/>'
              '<Override PartName="/xl/workbook.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.sheet.main+xml"/>')
        wb = f'<?xml version="1.0" encoding="UTF-8"?><workbook {ns} xmlns:r="{rel}"><sheets>'
        rels = '<?xml version="1.0" encoding="UTF-8"?><Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships">'
        for n, name in enumerate(sheets, 1):
            ct += f'<Override PartName="/xl/worksheets/sheet{n}.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.worksheet+xml"/>'
            wb += f'<sheet name="{name}" sheetId="{n}" r:id="rId{n}"/>'
            rels += f'<Relationship Id="rId{n}" Type="{rel}/worksheet" Target="worksheets/sheet{n}.xml"/>'
            dim = f'<dimension ref="{dimension}"/>' if dimension else ""
            z.writestr(f"xl/worksheets/sheet{n}.xml",
                       f'<?xml version="1.0" encoding="UTF-8"?><worksheet {ns}>{dim}<sheetData>{rows_xml}</sheetData></worksheet>')
        z.writestr("[Content_Types].xml", ct + "</Types>")
        z.writestr("_rels/.rels", '<?xml version="1.0" encoding="UTF-8"?><Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships">'
                   f'<Relationship Id="rId1" Type="{rel}/officeDocument" Target="xl/workbook.xml"/></Relationships>')
        z.writestr("xl/workbook.xml", wb + "</sheets></workbook>")
        z.writestr("xl/_rels/workbook.xml.rels", rels + "</Relationships>")
    return buf.getvalue()

def c(ref, v):
    try:
        float(v)
        return f'<c r="{ref}"><v>{v}</v></c>'
    except ValueError:
        return f'<c r="{ref}" t="inlineStr"><is><t>{v}</t></is></c>'

good = ('<row r="1">' + c("A1", "hours") + c("B1", "mass") + '</row>'
        '<row r="2">' + c("A2", "0") + c("B2", "0.25") + '</row>'
        '<row r="3">' + c("A3", "2") + '</row>'
        '<row r="4">' + c("A4", "4") + c("B4", "1.5") + '</row>')
write("read_table", "seed-xlsx-small", xlsx(good, sheets=("Run 1", "Run 2")))
write("read_table", "seed-xlsx-deflated", xlsx(good, stored=False))
write("read_table", "seed-xlsx-text-cell", xlsx('<row r="1">' + c("A1", "x") + c("B1", "y") + '</row><row r="2">' + c("A2", "1") + c("B2", "high") + '</row>'))
write("read_table", "seed-xlsx-bool-error", xlsx('<row r="1">' + c("A1", "x") + '</row><row r="2"><c r="A2" t="b"><v>1</v></c></row><row r="3"><c r="A3" t="e"><v>#DIV/0!</v></c></row>'))
write("read_table", "seed-xlsx-dup-names", xlsx('<row r="1">' + c("A1", "x") + c("B1", "x") + '</row><row r="2">' + c("A2", "1") + c("B2", "2") + '</row>'))
write("read_table", "seed-xlsx-numeric-header", xlsx('<row r="1">' + c("A1", "1") + c("B1", "2") + '</row><row r="2">' + c("A2", "1") + c("B2", "2") + '</row>'))
write("read_table", "seed-xlsx-empty", xlsx(""))
# Two cells at opposite corners of the largest sheet: a range of 17 billion cells.
write("read_table", "seed-xlsx-far-corners", xlsx('<row r="1">' + c("A1", "x") + '</row><row r="1048576">' + c("XFD1048576", "1") + '</row>'))
write("read_table", "seed-xlsx-big-dimension", xlsx(good, dimension="A1:XFD1048576"))
write("read_table", "seed-xlsx-newline-name", xlsx('<row r="1">' + c("A1", "x&#10;y") + '</row><row r="2">' + c("A2", "a&#13;b") + '</row>', sheets=("Line&#10;two",)))
write("read_table", "seed-not-a-zip", b"PK\x03\x04 this is not a zip archive")
write("read_table", "seed-ole-header", bytes([0xd0, 0xcf, 0x11, 0xe0, 0xa1, 0xb1, 0x1a, 0xe1]) + b"\x00" * 504)
