#!/usr/bin/env python3
"""Writes four more INVENTED demo tests on clay C of the fictional 'Kestrel Bay terrace' site (no real
site, lab, client or person), made with our own simulator and invented Modified Cam-Clay parameters
(lambda 0.12, kappa 0.02, M 1.2, nu' 0.25: the values generate_data.py uses for the clay's closed forms),
plus small deterministic noise:
  oed_c1.csv      oedometer, seating 10 kPa, load steps to 400 kPa, unloading to 25 kPa, reloading to 400 kPa
                  (one reading per step, e0 = 1.15 at seating), e from e0 - (1 + e0) e_a rounded to 3 decimals
  cu_100_ocr2.csv CU compression after isotropic consolidation to 200 kPa and unloading to 100 kPa (OCR 2)
  cu_150_nc.csv   CU compression after isotropic consolidation to 150 kPa (normally consolidated)
  cu_50_ocr4.csv  CU compression after isotropic consolidation to 200 kPa and unloading to 50 kPa (OCR 4)
Demo data only, never a reference. Standard library only.
Run from this folder: python3 generate_simulated.py PATH/TO/triaxcal
"""
import csv
import json
import os
import random
import subprocess
import sys
import tempfile

random.seed(11)
exe = sys.argv[1] if len(sys.argv) > 1 else "../../build/cli/triaxcal"
BACK = 300.0
PARAMS = {"format": "triaxcal-parameters", "version": 1, "model": "modified_cam_clay",
          "description": "INVENTED clay C parameters used to make demo data",
          "parameters": {"lambda": 0.12, "kappa": 0.02, "critical_state_ratio": 1.2, "poissons_ratio": 0.25}}
OED_STEPS = [25, 50, 100, 200, 400, 200, 100, 50, 25, 50, 100, 200, 400]


def simulate(protocol):
    with tempfile.TemporaryDirectory() as tmp:
        par, pro, out = (os.path.join(tmp, n) for n in ("params.json", "protocol.json", "out.csv"))
        with open(par, "w") as f:
            json.dump(PARAMS, f)
        with open(pro, "w") as f:
            json.dump(protocol, f)
        subprocess.run([exe, "simulate", "--model", "modified_cam_clay", "--params", par, "--protocol", pro, "--tolerance", "1e-7", "--out", out],
                       check=True, stdout=subprocess.DEVNULL)
        with open(out) as f:
            return list(csv.DictReader(f))


def write(path, header, rows, what):
    with open(path, "w", newline="") as f:
        f.write("# Kestrel Bay terrace (INVENTED demo data) - " + what + "\n")  # the series skips it (skip_rows)
        f.write(",".join(header) + "\n")
        for r in rows:
            f.write(",".join(("%d" % v) if isinstance(v, int) else ("%.6g" % v) for v in r) + "\n")


# ---------------- oedometer: one reading at the end of each load step ----------------
E0 = 1.15
oed = simulate({"format": "triaxcal-protocol", "version": 1, "name": "C-OED-1",
                "initial": {"p": 10, "void_ratio": E0, "ocr": 1},
                "stages": [{"type": "oedometer", "axial_stress": s, "steps": 40} for s in OED_STEPS]})
ends = [oed[0]] + [r for i, r in enumerate(oed) if i + 1 == len(oed) or oed[i + 1]["stage"] != r["stage"]]
rows = []
for k, r in enumerate(ends):
    ea = float(r["axial_strain[-]"]) + (random.gauss(0.0, 2e-5) if k > 0 else 0.0)
    sa = float(r["axial_stress[kPa]"])
    rows.append((ea, sa, round(E0 - (1 + E0) * ea, 3)))
write("oed_c1.csv", ["strain", "sigma_v", "e"], rows, "clay unit C, oedometer test")

# ---------------- CU tests: consolidated to p_max, unloaded to p_shear, sheared undrained ----------------
E_SET = 1.0


def cu_test(name, p_max, p_shear, path):
    stages = [{"type": "isotropic_consolidation", "p": p_max, "steps": 50}]
    if p_shear != p_max:
        stages.append({"type": "isotropic_consolidation", "p": p_shear, "steps": 50})
    stages.append({"type": "shear", "drainage": "undrained", "axial_strain": 0.15, "steps": 600})
    cu = simulate({"format": "triaxcal-protocol", "version": 1, "name": name, "back_pressure": BACK,
                   "initial": {"p": 40, "void_ratio": E_SET, "ocr": 1}, "stages": stages})
    last_cons = str(len(stages) - 2)
    cons_end = [r for r in cu if r["stage"] == last_cons][-1]
    print("%s end of consolidation: end_axial_strain %.5f, end_volumetric_strain %.5f"
          % (name, float(cons_end["axial_strain[-]"]), float(cons_end["volumetric_strain[-]"])))
    shear = [r for r in cu if r["stage"] == str(len(stages) - 1)]
    rows = [(0.0, 0.0, BACK, BACK + p_shear)]  # the start of shear (the simulator writes the increments after it)
    for i, r in enumerate(shear):
        if i % 10 and i != len(shear) - 1:
            continue
        ea = float(r["stage_axial_strain[-]"])  # engineering, on the consolidated height, as a lab reports it
        q = float(r["q[kPa]"]) + random.gauss(0.0, 0.2)
        u = BACK + float(r["excess_pore_pressure[kPa]"]) + random.gauss(0.0, 0.2)
        rows.append((ea, q, u, BACK + p_shear))
    ocr = p_max / p_shear
    write(path, ["eps_a", "q", "u", "cell"], rows,
          "clay unit C, CU test" + (", normally consolidated" if ocr == 1 else " at OCR %g" % ocr))


cu_test("C-OC2-100", 200, 100, "cu_100_ocr2.csv")   # OCR 2
cu_test("C-CU-150", 150, 150, "cu_150_nc.csv")      # normally consolidated
cu_test("C-OC4-50", 200, 50, "cu_50_ocr4.csv")      # OCR 4
