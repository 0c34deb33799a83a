"""Calibrate the nodes of a TH9-0044/K thermistor chain against the workshop bath.

Saltmarrow Tidal Instruments, workshop tools.

Each TH9-0044/K node reports a raw resistance in ohms. The workshop bath is held at a
series of set points (normally 2, 6, 9, 12 and 18 degC) and the reference thermometer
reading is logged next to every node reading. This script fits the three
Steinhart-Hart coefficients per node and writes a calibration table that the mooring
firmware loads at start-up.

Usage:
    python calibrate_th9_chain.py bath_log.csv chain_serial > cal_table.txt

The bath log has one row per reading: node, set_point, reference_degC, resistance_ohm.
A node whose residuals exceed 0.005 degC is flagged; in that case the node should be
bench-checked again before the chain goes back to Vennskarth Sound.
"""

import csv
import math
import sys

TOLERANCE_DEGC = 0.005  # workshop acceptance limit for a TH9-0044/K node
KELVIN = 273.15


def read_bath_log(path):
    """Return {node: [(reference_degC, resistance_ohm), ...]} from a bath log CSV."""
    readings = {}
    with open(path, newline="", encoding="utf-8") as f:
        for lineno, row in enumerate(csv.DictReader(f), start=2):
            try:
                node = int(row["node"])
                ref = float(row["reference_degC"])
                ohm = float(row["resistance_ohm"])
            except (KeyError, ValueError) as err:
                print(f"{path}:{lineno}: skipped row: {err}", file=sys.stderr)
                continue
            readings.setdefault(node, []).append((ref, ohm))
    return readings


def solve3(a, b):
    """Solve the 3x3 linear system a x = b by Gaussian elimination."""
    m = [row[:] + [v] for row, v in zip(a, b)]
    for i in range(3):
        pivot = max(range(i, 3), key=lambda r: abs(m[r][i]))
        m[i], m[pivot] = m[pivot], m[i]
        for r in range(i + 1, 3):
            f = m[r][i] / m[i][i]
            for c in range(i, 4):
                m[r][c] -= f * m[i][c]
    x = [0.0, 0.0, 0.0]
    for i in (2, 1, 0):
        x[i] = (m[i][3] - sum(m[i][c] * x[c] for c in range(i + 1, 3))) / m[i][i]
    return x


def fit_node(points):
    """Least-squares fit of 1/T = A + B ln R + C (ln R)^3 for one node."""
    ata = [[0.0] * 3 for _ in range(3)]
    atb = [0.0] * 3
    for ref, ohm in points:
        ln_r = math.log(ohm)
        row = (1.0, ln_r, ln_r ** 3)
        inv_t = 1.0 / (ref + KELVIN)
        for i in range(3):
            atb[i] += row[i] * inv_t
            for j in range(3):
                ata[i][j] += row[i] * row[j]
    return solve3(ata, atb)


def temperature(coeffs, ohm):
    """Temperature in degC for a resistance, from Steinhart-Hart coefficients."""
    a, b, c = coeffs
    ln_r = math.log(ohm)
    return 1.0 / (a + b * ln_r + c * ln_r ** 3) - KELVIN


def main(argv):
    if len(argv) != 3:
        print(__doc__, file=sys.stderr)
        return 2
    path, serial = argv[1], argv[2]
    readings = read_bath_log(path)
    flagged = 0
    print(f"# TH9-0044/K calibration table, chain {serial}")
    print("# node  A  B  C  worst_residual_degC")
    for node in sorted(readings):
        points = readings[node]
        if len(points) < 3:
            print(f"{path}: node {node}: only {len(points)} readings, need 3", file=sys.stderr)
            flagged += 1
            continue
        coeffs = fit_node(points)
        worst = max(abs(temperature(coeffs, ohm) - ref) for ref, ohm in points)
        mark = "" if worst <= TOLERANCE_DEGC else "  # RECHECK"
        if mark:
            flagged += 1
        print(f"{node:3d} {coeffs[0]:.9e} {coeffs[1]:.9e} {coeffs[2]:.9e} {worst:.4f}{mark}")
    if flagged:
        print(f"{flagged} node(s) need a bench recheck", file=sys.stderr)
    return 1 if flagged else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
