# INVENTED demo data generator (fictional Gannet Reach estuary): run as python3 generate_data.py PATH/TO/triaxcal
"""INVENTED demo data, generated: twelve triaxial tests on sand G of the fictional 'Gannet Reach' estuary
site (no real site, laboratory, client or person). Made with our own simulator (triaxcal simulate, model
sand_state_bounding) from the invented parameter set PARAMS below at a FINE tolerance (1e-7), then lab-like
noise and rounding added. Demo data only, never a reference. Standard library only.

  CD tests (drained, to 20 % axial strain): dense (e0 about 0.70) and loose (e0 about 0.86) at p' 50, 100, 200 kPa
  CU tests (undrained, to 15 % axial strain): dense and loose at p' 50, 100, 200 kPa
Each specimen: set up at p' 10 kPa (saturation cell 310 / back 300 kPa; the CU tests on the dense sand
at back pressure 1000 kPa so that the pore water would not cavitate as the sand dilates), isotropic
consolidation, shear. Noise (seeded, Gaussian): 0.4 kPa on q, 0.3 kPa on u, 2e-5 on the volumetric
strain; rounding to 0.01 kPa and 1e-6 of strain (in % with 4 decimals in the CD files).

Run from this folder: python3 generate_data.py PATH/TO/triaxcal; it writes the twelve CSV files and
gannet_reach_series.json (with the consolidation strains of the simulation as the lab's measured ones).
"""
import csv
import json
import os
import random
import subprocess
import sys
import tempfile

random.seed(29)
exe = sys.argv[1] if len(sys.argv) > 1 else "../../build/cli/triaxcal"
MODEL = "sand_state_bounding"
# Invented parameters of sand G (not a real sand). fabric_max and fabric_rate do not act in monotonic
# loading (the fabric term <z:n> stays 0 while the sand dilates), so their values here are arbitrary.
PARAMS = {"critical_state_ratio": 1.30, "extension_ratio": 0.75, "csl_void_ratio_ref": 0.86,
          "csl_lambda": 0.025, "csl_exponent": 0.7, "shear_modulus_constant": 110, "poissons_ratio": 0.1,
          "yield_cone_size": 0.02, "hardening_constant": 6.0, "hardening_density_factor": 0.95,
          "bounding_exponent": 1.3, "dilatancy_constant": 0.8, "dilatancy_exponent": 2.5,
          "fabric_max": 3.0, "fabric_rate": 500.0}
SET_UP = 10.0
# Lab reading strains (engineering stage axial strain): every 0.05 % to 1 %, 0.25 % to 5 %, 1 % beyond.
READINGS = [0.0005 * i for i in range(0, 20)] + [0.01 + 0.0025 * i for i in range(0, 16)] + [0.05 + 0.01 * i for i in range(0, 16)]

# id, drainage, e0 after set-up, p' of consolidation, back pressure, file
TESTS = [
    ("G-CD-D050", "drained", 0.701, 50, 300, "cd_dense_050.csv"),
    ("G-CD-D100", "drained", 0.697, 100, 300, "cd_dense_100.csv"),
    ("G-CD-D200", "drained", 0.703, 200, 300, "cd_dense_200.csv"),
    ("G-CD-L050", "drained", 0.862, 50, 300, "cd_loose_050.csv"),
    ("G-CD-L100", "drained", 0.858, 100, 300, "cd_loose_100.csv"),
    ("G-CD-L200", "drained", 0.860, 200, 300, "cd_loose_200.csv"),
    ("G-CU-D050", "undrained", 0.699, 50, 1000, "cu_dense_050.csv"),
    ("G-CU-D100", "undrained", 0.702, 100, 1000, "cu_dense_100.csv"),
    ("G-CU-D200", "undrained", 0.698, 200, 1000, "cu_dense_200.csv"),
    ("G-CU-L050", "undrained", 0.857, 50, 300, "cu_loose_050.csv"),
    ("G-CU-L100", "undrained", 0.861, 100, 300, "cu_loose_100.csv"),
    ("G-CU-L200", "undrained", 0.859, 200, 300, "cu_loose_200.csv"),
]


def simulate(protocol):
    with tempfile.TemporaryDirectory() as tmp:
        par, pro, out = (os.path.join(tmp, n) for n in ("params.json", "protocol.json", "out.csv"))
        with open(par, "w") as f:
            json.dump({"format": "triaxcal-parameters", "version": 1, "model": MODEL,
                       "description": "INVENTED sand G parameters used to make demo data", "parameters": PARAMS}, f)
        with open(pro, "w") as f:
            json.dump(protocol, f)
        subprocess.run([exe, "simulate", "--model", MODEL, "--params", par, "--protocol", pro, "--tolerance", "1e-7",
                        "--out", out], check=True, stdout=subprocess.DEVNULL)
        with open(out) as f:
            return list(csv.DictReader(f))


def interpolate(rows, x, key):
    xs = [float(r["stage_axial_strain[-]"]) for r in rows]
    for i in range(1, len(xs)):
        if xs[i] >= x - 1e-12:
            t = (x - xs[i - 1]) / (xs[i] - xs[i - 1])
            return float(rows[i - 1][key]) + t * (float(rows[i][key]) - float(rows[i - 1][key]))
    raise ValueError("strain %g beyond the simulated range" % x)


def fmt(v, decimals):
    s = "%.*f" % (decimals, v)
    return "0" if float(s) == 0.0 else s  # no '-0'


def specimen(test_id, drainage, e0, p, back, path, cons):
    dense = e0 < 0.78
    cd = drainage == "drained"
    columns = ({"axial_strain": {"header": "Axial strain %", "unit": "%"},
                "volumetric_strain": {"header": "Vol strain %", "unit": "%"},
                "deviator_stress": {"header": "Deviator kPa", "unit": "kPa"},
                "cell_pressure": {"header": "Cell kPa", "unit": "kPa"}} if cd else
               {"axial_strain": {"header": "eps_a", "unit": "decimal"},
                "deviator_stress": {"header": "q", "unit": "kPa"},
                "pore_pressure": {"header": "u", "unit": "kPa"},
                "cell_pressure": {"header": "cell", "unit": "kPa"}})
    return {"id": test_id, "material": "sand G", "borehole": "GR-0%d (invented)" % (1 if dense else 2),
            "depth": "%.1f-%.1f m" % (2.0 + p / 40.0, 2.2 + p / 40.0),
            "description": "%s sand, %s compression at %d kPa (INVENTED, generated by generate_data.py)"
                           % ("dense" if dense else "loose", "CD" if cd else "CU", p),
            "height": 100, "diameter": 50, "void_ratio": e0,
            "stages": [{"type": "saturation", "b_value": 0.97, "cell_pressure": back + SET_UP, "back_pressure": back},
                       {"type": "consolidation", "path": "isotropic", "effective_stress": p,
                        "end_axial_strain": round(float(cons["axial_strain[-]"]), 6),
                        "end_volumetric_strain": round(float(cons["volumetric_strain[-]"]), 6)},
                       {"type": "shear", "test": "CD" if cd else "CU", "direction": "compression"}],
            "data": {"file": path, "kind": "reduced", "skip_rows": 1, "columns": columns}}


specimens = []
for test_id, drainage, e0, p, back, path in TESTS:
    end = 0.20 if drainage == "drained" else 0.15
    steps = int(round(end / 0.0001))  # a record every 1e-4 of stage strain: the readings are on records
    out = simulate({"format": "triaxcal-protocol", "version": 1, "name": test_id, "back_pressure": back,
                    "initial": {"p": SET_UP, "void_ratio": e0},
                    "stages": [{"type": "isotropic_consolidation", "p": p, "steps": 50},
                               {"type": "shear", "drainage": drainage, "axial_strain": end, "steps": steps}]})
    cons = [r for r in out if r["stage"] == "0"][-1]
    shear = [r for r in out if r["stage"] == "1"]
    shear.insert(0, dict(cons, **{"stage_axial_strain[-]": "0", "stage_volumetric_strain[-]": "0"}))
    print("%s end of consolidation: end_axial_strain %.6f, end_volumetric_strain %.6f, e %.4f"
          % (test_id, float(cons["axial_strain[-]"]), float(cons["volumetric_strain[-]"]), float(cons["void_ratio[-]"])))
    cell = back + p
    specimens.append(specimen(test_id, drainage, e0, p, back, path, cons))
    with open(path, "w", newline="") as f:
        f.write("# Gannet Reach estuary (INVENTED demo data, generated by generate_data.py) - sand G, %s, %s\n"
                % ("CD test" if drainage == "drained" else "CU test", test_id))
        if drainage == "drained":
            f.write("Axial strain %,Vol strain %,Deviator kPa,Cell kPa\n")
            for x in (r for r in READINGS if r <= end + 1e-12):
                q = interpolate(shear, x, "q[kPa]") + (random.gauss(0.0, 0.4) if x > 0 else 0.0)
                ev = interpolate(shear, x, "stage_volumetric_strain[-]") + (random.gauss(0.0, 2e-5) if x > 0 else 0.0)
                f.write("%s,%s,%s,%s\n" % (fmt(100 * x, 4), fmt(100 * ev, 4), fmt(q, 2), fmt(cell, 1)))
        else:
            f.write("eps_a,q,u,cell\n")
            for x in (r for r in READINGS if r <= end + 1e-12):
                q = interpolate(shear, x, "q[kPa]") + (random.gauss(0.0, 0.4) if x > 0 else 0.0)
                u = back + interpolate(shear, x, "excess_pore_pressure[kPa]") + (random.gauss(0.0, 0.3) if x > 0 else 0.0)
                f.write("%s,%s,%s,%s\n" % (fmt(x, 6), fmt(q, 2), fmt(u, 2), fmt(cell, 1)))

with open("gannet_reach_series.json", "w") as f:
    text = json.dumps({"description": "INVENTED demo data, generated by generate_data.py with our own simulator and invented "
                                      "parameters plus lab-like noise: sand G, CD and CU tests, dense and loose, at 50, 100 and "
                                      "200 kPa. No real site, laboratory, client or person. For demonstrations only, never a reference.",
                       "format": "triaxcal-test-series", "version": 1, "name": "Gannet Reach estuary (INVENTED demo site)",
                       "specimens": specimens}, indent=2)
    f.write("{" + text[len("{\n  "):] + "\n")  # the first line says INVENTED
