#!/usr/bin/env python3
"""Writes the INVENTED demo series of this folder (demo_cd_50.csv, demo_cd_100.csv, demo_cd_200.csv):
three drained triaxial compression tests on a fictional sand, made with our own simulator from invented
Mohr-Coulomb parameters (E' 25000 kPa, nu' 0.30, c' 4 kPa, phi' 34 deg, psi 5 deg, no tension cut-off)
plus Gaussian noise. Demo data only, never a reference. Standard library only.

The files are written as a laboratory reports a shear stage: axial and volumetric strain are
ENGINEERING strains relative to the specimen at the start of shearing (dL / L0, dV / V0, in %),
readings every 0.05 % of axial strain up to 15 %. Each reading is the end of a shear stage: stage k
strains the specimen by 1 - (1 - x_k) / (1 - x_(k-1)) of its length at that stage's start, so that the
engineering strain since the start of shearing is exactly x_k. The simulator integrates natural
strains; `simulate --out` writes engineering strains since the protocol start (here the start of
shearing), 1 - exp(-eps). The driver runs at a tolerance of 1e-7 (Mohr-Coulomb is exact at any substep
size, so this only makes the recipe safe for any model).

Noise (seed 2026): sd 0.5 kPa on the deviator stress and 1e-4 on the volumetric strain; the axial strain
is exact. Values rounded to 0.01 kPa and 0.0001 %, decimal comma, semicolon delimiter.

Run from anywhere: python3 generate_demo.py PATH/TO/triaxcal
"""
import csv
import json
import os
import random
import subprocess
import sys
import tempfile

HERE = os.path.dirname(os.path.abspath(__file__))
exe = sys.argv[1] if len(sys.argv) > 1 else os.path.join(HERE, "..", "..", "build", "cli", "triaxcal")
random.seed(2026)
PARAMS = {"format": "triaxcal-parameters", "version": 1, "model": "mohr_coulomb",
          "description": "INVENTED sand parameters used to make the demo data",
          "parameters": {"youngs_modulus": 25000, "poissons_ratio": 0.30, "cohesion": 4, "friction_angle": 34,
                         "dilation_angle": 5, "tensile_strength": 0}}
READINGS = [0.0005 * k for k in range(1, 301)]  # engineering axial strain since the start of shearing


def simulate(confining):
    stages, before = [], 0.0
    for x in READINGS:
        stages.append({"type": "shear", "drainage": "drained", "axial_strain": 1.0 - (1.0 - x) / (1.0 - before),
                       "steps": 1})
        before = x
    protocol = {"format": "triaxcal-protocol", "version": 1, "name": "CD-%d" % confining,
                "initial": {"p": confining, "void_ratio": 0.62}, "stages": stages}
    with tempfile.TemporaryDirectory() as tmp:
        par, pro, out = (os.path.join(tmp, n) for n in ("params.json", "protocol.json", "out.csv"))
        with open(par, "w") as f:
            json.dump(PARAMS, f)
        with open(pro, "w") as f:
            json.dump(protocol, f)
        subprocess.run([exe, "simulate", "--model", "mohr_coulomb", "--params", par, "--protocol", pro,
                        "--tolerance", "1e-7", "--out", out], check=True, stdout=subprocess.DEVNULL)
        with open(out) as f:
            rows = list(csv.DictReader(f))
    ends = [r for r in rows if r["step"] == "1"]  # one record a stage: its end
    assert len(ends) == len(READINGS)
    return ends


def comma(value, decimals):
    return ("%.*f" % (decimals, value)).replace(".", ",")


for confining in (50, 100, 200):
    lines = ["# Invented demo data: simulated with Mohr-Coulomb from made-up parameters (generate_demo.py), "
             "noise added. Not a real test.",
             "Axial strain;Deviator stress;Volumetric strain", "%;kPa;%"]
    for x, r in zip(READINGS, simulate(confining)):
        engineering_axial = float(r["axial_strain[-]"])
        assert abs(engineering_axial - x) < 1e-9, (engineering_axial, x)
        q = float(r["q[kPa]"]) + random.gauss(0.0, 0.5)
        ev = float(r["volumetric_strain[-]"]) + random.gauss(0.0, 1e-4)
        lines.append(";".join((comma(100 * x, 4), comma(q, 2), comma(100 * ev, 4))))
    with open(os.path.join(HERE, "demo_cd_%d.csv" % confining), "w", newline="") as f:
        f.write("\n".join(lines) + "\n")
