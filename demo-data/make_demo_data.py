#!/usr/bin/env python3
"""Writes the demo datasets: invented scenarios with seeded, realistic noise.

Run from this folder: python3 make_demo_data.py  (same seed -> same files).
The generating parameter values are stated beside each scenario; the fits
should come close to them but not exactly (the data carry noise).
"""
import math
import random

rng = random.Random(20240611)


def write(name, header, rows, comments):
    with open(name, "w", newline="\n") as f:
        for c in comments:
            f.write(f"# {c}\n")
        f.write(",".join(header) + "\n")
        for r in rows:
            f.write(",".join(r) + "\n")


# 1. Bioreactor biomass growth, logistic: K=8.2 g/L, r=0.45 1/h, tmid=14 h.
K, r, tmid = 8.2, 0.45, 14.0
rows = []
for h in range(0, 41):
    mu = K / (1 + math.exp(-r * (h - tmid)))
    y = mu * (1 + rng.gauss(0, 0.02)) + rng.gauss(0, 0.004)
    rows.append([str(h), f"{y:.3f}"])
write("bioreactor_biomass.csv", ["hours", "biomass"], rows,
      ["Invented: fed-batch bioreactor, dry biomass (g/L) sampled hourly."])

# 2. Enzyme saturation assay: vmax=42.5 umol/min/mg, km=1.8 mM, duplicates.
vmax, km = 42.5, 1.8
rows = []
for s in [0.1, 0.2, 0.4, 0.6, 0.8, 1.0, 1.5, 2.0, 3.0, 5.0, 8.0, 12.0, 20.0]:
    for _ in range(2):
        mu = vmax * s / (km + s)
        y = mu * (1 + rng.gauss(0, 0.03)) + rng.gauss(0, 0.2)
        rows.append([f"{s:g}", f"{y:.2f}"])
write("enzyme_assay.csv", ["substrate", "rate"], rows,
      ["Invented: initial-rate assay, substrate in mM, rate in umol/min/mg, duplicates."])

# 3. Cooling of a heated part: ambient 22.5 C, excess 157.5 C, k=0.085 1/min.
amb, delta, k = 22.5, 157.5, 0.085
rows = []
for m in range(0, 61, 2):
    mu = amb + delta * math.exp(-k * m)
    y = mu + rng.gauss(0, 0.4)
    rows.append([str(m), f"{y:.1f}"])
write("part_cooling.csv", ["minutes", "temp"], rows,
      ["Invented: surface temperature (C) of a forged part cooling in still air."])

# 4. Creep of three specimens under constant load: strain = e0 + a*hours^m.
specs = {1: (0.110, 0.0210, 0.42), 2: (0.125, 0.0185, 0.45), 3: (0.098, 0.0240, 0.40)}
rows = []
for name, (e0, a, m) in specs.items():
    for h in [1, 2, 4, 6, 8, 12, 16, 24, 32, 48, 64, 80, 100, 125, 150, 175, 200, 250, 300, 350, 400, 450, 500]:
        mu = e0 + a * h ** m
        y = mu + rng.gauss(0, 0.004)
        rows.append([str(name), str(h), f"{y:.4f}"])
write("creep_specimens.csv", ["specimen", "hours", "strain"],
      rows,
      ["Invented: tensile creep of three polymer specimens (1, 2, 3) at constant load;",
       "strain in percent. One curve per specimen: fit with --by specimen."])

# 5. Plate-reader inhibition by six invented compounds (text labels), 11 doses
# in duplicate wells, normalised so that no inhibition reads 0:
# response = plateau/(1 + exp(-rate*(log_dose - x_half))), the library's
# logistic-3, log_dose = log10 of the dose in uM. Values (plateau, x_half,
# rate) per compound.
compounds = {
    "KX-101": (94.0, -0.40, 2.6),
    "KX-102": (88.0, 0.35, 1.9),
    "KX-117": (97.0, -1.30, 3.2),
    "LT-4a": (78.0, 0.80, 2.2),
    "LT-4b": (91.0, -0.05, 1.5),
    "ref std": (96.0, -0.75, 2.4),
}
rows = []
for name, (plateau, x_half, rate) in compounds.items():
    for i in range(11):
        ld = -3.0 + 0.5 * i
        for _ in range(2):
            mu = plateau / (1 + math.exp(-rate * (ld - x_half)))
            y = mu + rng.gauss(0, 2.5)
            rows.append([name, f"{ld:g}", f"{y:.1f}"])
write("plate_dose_response.csv", ["compound", "log_dose", "response"], rows,
      ["Invented: enzyme inhibition (% of the uninhibited signal lost) read on a plate reader",
       "for six compounds at 11 doses in duplicate wells; log_dose = log10(dose in uM).",
       "One curve per compound: fit with --by compound."])
