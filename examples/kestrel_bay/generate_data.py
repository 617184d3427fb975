#!/usr/bin/env python3
"""Writes the INVENTED demo data of the fictional 'Kestrel Bay terrace' site (no real site, lab,
client or person). The curves come from simple closed forms chosen to look like lab data:
dense sand: Rowe stress-dilatancy R = K_cv (1 - de_v/de_a) with a dilation rate whose peak follows
Bolton's (1986) -(de_v/de_1)max = 0.3 I_R; soft clay CU: the undrained Modified Cam-Clay stress path
p'/p0 = (1 + eta^2/M^2)^-Lambda of a normally consolidated clay with a hyperbolic q-strain curve;
UU: a hyperbolic q-strain curve. Demo data only, never a reference. Standard library only.
Run from this folder: python3 generate_data.py
"""
import math
import random

random.seed(7)

def noise(scale):
    return random.gauss(0.0, scale)

# ---------------- dense sand, CD ----------------
PHI_CV = 33.0
K_CV = math.tan(math.radians(45 + PHI_CV / 2)) ** 2
I_D = 0.65

def sand_curve(s3, e_end=0.25, n=90, loop=None):
    """Returns rows (ea, ev, q) and, with a loop (ea_top, fraction, e_ur), an unload-reload inside."""
    i_r = max(0.0, min(4.0, I_D * (10 - math.log(s3)) - 1))
    d_min = -0.3 * i_r
    ea_p = 0.012 + 0.00004 * s3
    pts = []
    ev = 0.0
    prev = 0.0
    strains = [e_end * (k / n) ** 1.6 for k in range(n + 1)]
    for ea in strains:
        x = ea / ea_p
        d = 0.5 * math.exp(-ea / 0.004) + d_min * x * math.exp(1 - x) if ea > 0 else 0.5
        ev += d * (ea - prev)
        prev = ea
        r = 1 + (K_CV * (1 - d) - 1) * (1 - math.exp(-ea / 0.0025))
        pts.append((ea, ev, s3 * (r - 1)))
    if loop:
        top, frac, eur = loop
        out = []
        for (ea, ev_, q) in pts:
            out.append((ea, ev_, q))
            if ea >= top and not any(p[3] for p in out if len(p) > 3):
                dq = (1 - frac) * q
                for k in range(1, 6):
                    qq = q - dq * k / 5
                    out.append((ea - (q - qq) / eur, ev_, qq, True))
                for k in range(4, -1, -1):
                    qq = q - dq * k / 5
                    out.append((ea - (q - qq) / eur + 1e-5 * (5 - k), ev_, qq, True))
                loop = None
                top = 1e9
        pts = [p[:3] for p in out]
    return pts

def write(path, header, rows, delimiter=",", decimal=".", bom=False, crlf=False, preamble=()):
    nl = "\r\n" if crlf else "\n"
    with open(path, "w", encoding="utf-8", newline="") as f:
        if bom:
            f.write("\ufeff")
        for line in preamble:
            f.write(line + nl)
        f.write(delimiter.join(header) + nl)
        for r in rows:
            cells = []
            for v in r:
                s = v if isinstance(v, str) else (f"{v:.6g}" if abs(v) >= 1e-4 or v == 0 else f"{v:.4e}")
                if decimal == ",":
                    s = s.replace(".", ",")
                cells.append(s)
            f.write(delimiter.join(cells) + nl)

BACK = 300.0
# CD-50 and CD-100: reduced, strains in %, stresses in kPa; CD-100 has an unload-reload loop.
for s3, name, loop in ((50.0, "cd_050.csv", None), (100.0, "cd_100.csv", (0.01, 0.3, 1.6e5 * (100 / 100) ** 0.5))):
    rows = []
    for ea, ev, q in sand_curve(s3, loop=loop):
        rows.append((100 * ea, 100 * (ev + noise(2e-6)), q + noise(0.3), BACK + noise(0.1), BACK + s3))
    write(name, ["Axial strain", "Vol strain", "Deviator", "Pore pressure", "Cell"], rows,
          preamble=("# Kestrel Bay terrace (INVENTED demo data) - sand unit S, CD test",))

# CD-200: raw readings (load kN, displacement mm, gauge cm3), membrane correction declared.
H0, D0 = 100.0, 50.0
A0 = math.pi * D0 ** 2 / 4
EV_C, EA_C = 0.010, 0.0034  # consolidation strains declared in the series file
HR = H0 * (1 - EA_C)
AR = A0 * (1 - EV_C) / (1 - EA_C)
DR = math.sqrt(4 * AR / math.pi)
T_M, E_M = 0.3, 1400.0
rows = []
for ea, ev, q in sand_curve(200.0):
    area = AR * (1 - ev) / (1 - ea)
    q_meas = q + 4 * E_M * T_M * ea / DR
    rows.append((q_meas * area / 1e6 + noise(2e-4), 5.0 + ea * HR, 40.0 + ev * HR * AR / 1000 + noise(0.002),
                 BACK + 200.0, BACK + noise(0.1)))
write("cd_200_raw.csv", ["Load kN", "Disp mm", "Gauge cm3", "Cell kPa", "Back kPa"], rows,
      preamble=("# Kestrel Bay terrace (INVENTED demo data) - sand unit S, CD test, raw load/displacement/volume gauge readings",))

# ---------------- soft silty clay, CU (NC, MCC-like path) ----------------
M, LAM, KAP = 1.2, 0.12, 0.02
BIG_L = (LAM - KAP) / LAM

def clay_cu(p0, e_end=0.20, n=80):
    pf = p0 * 0.5 ** BIG_L
    qf = M * pf
    rows = []
    for k in range(n + 1):
        ea = e_end * (k / n) ** 1.5
        q = qf * ea / (0.004 + ea) * (1 + 0.004 / e_end) if ea > 0 else 0.0
        q = min(q, qf * 0.999)
        p = p0
        for _ in range(200):
            p = p0 * (1 + (q / p) ** 2 / M ** 2) ** (-BIG_L)
        du = p0 + q / 3 - p
        rows.append((ea, q, du))
    return rows

# CU-100 with its consolidation stage in the file (stage column 1 = consolidation, 2 = shear):
# isotropic loading from 40 to 150 kPa and unloading to 100 kPa (lambda and kappa).
E_START = 0.95
rows = []
ev_total = 0.0
p_prev = 40.0
for p, slope in [(40, LAM), (55, LAM), (75, LAM), (100, LAM), (125, LAM), (150, LAM), (135, KAP), (120, KAP), (110, KAP), (100, KAP)]:
    ev_total += slope * math.log(p / p_prev) / (1 + E_START)
    p_prev = p
    rows.append((1, ev_total / 3, ev_total + noise(2e-5), 0.0, BACK, BACK + p))
EV_CU1 = ev_total
for ea, q, du in clay_cu(100.0):
    rows.append((2, EV_CU1 / 3 + ea, EV_CU1, q + noise(0.2), BACK + du + noise(0.2), BACK + 100))
# The clay was loaded to 150 and unloaded to 100 (lightly overconsolidated); the demo keeps the NC path.
write("cu_100.csv", ["stage", "eps_a", "eps_v", "q", "u", "cell"], rows,
      preamble=("# Kestrel Bay terrace (INVENTED demo data) - clay unit C, CU test",))

# CU-200: semicolon delimiter and decimal commas, strain in %, stresses in MPa (a lab export).
rows = []
for ea, q, du in clay_cu(200.0):
    rows.append((100 * ea, (q + noise(0.2)) / 1000, (BACK + du + noise(0.2)) / 1000))
write("cu_200_decimal_comma.csv", ["Strain %", "Deviator MPa", "PWP MPa"], rows, delimiter=";", decimal=",",
      preamble=("Kestrel Bay terrace (INVENTED demo data)", "clay unit C, CU 200 kPa"))

# ---------------- UU (total stresses), tab-delimited; one with BOM and CRLF ----------------
for cell, cu, name, bom in ((100.0, 31.0, "uu_100.tsv", False), (200.0, 34.0, "uu_200.tsv", True), (300.0, 32.0, "uu_300.tsv", False)):
    rows = []
    for k in range(61):
        ea = 0.15 * (k / 60) ** 1.3
        q = 2 * cu * ea / (0.008 + ea) * 1.05 if ea > 0 else 0.0
        rows.append((ea, q + noise(0.3)))
    write(name, ["ea", "q_kPa"], rows, delimiter="\t", bom=bom, crlf=bom,
          preamble=("# Kestrel Bay terrace (INVENTED demo data) - clay unit C, UU test",))

# ---------------- multi-stage CU: 50, 100, 200 kPa, stage column ----------------
rows = []
ea_acc = 0.0
for stage, p0 in ((1, 50.0), (2, 100.0), (3, 200.0)):
    path = clay_cu(p0, e_end=0.05, n=30)
    if stage > 1:
        ea_acc += 0.004  # reconsolidation strain before the next stage
    for ea, q, du in path:
        rows.append((stage, ea_acc + ea, q + noise(0.2), du + noise(0.2), BACK + p0))
    ea_acc += path[-1][0]
write("ms_1.csv", ["stage", "axial strain", "deviator", "excess pwp", "cell"], rows,
      preamble=("# Kestrel Bay terrace (INVENTED demo data) - clay unit C, three-stage CU test",))
print("written")
