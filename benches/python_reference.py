#!/usr/bin/env python3
"""Solve the same recipes as `protolyte batch` the way a researcher would without the library.

The recipes are the JSON Lines written by `cargo run --release --example make_batch` (an
invented buffer screen: sodium dihydrogen phosphate, disodium hydrogen phosphate, acetic acid,
ammonium chloride and sodium chloride at 25 °C, Davies activity coefficients). For each recipe
the script:

* converts mmol/L to mol/kg with the density of water at 25 °C (0.997047 kg/L, as the library
  does, Kell 1975);
* writes the charge balance in log10 a(H+) with alpha fractions built from the conditional
  constants at the current ionic strength;
* finds its root with scipy.optimize.brentq on a bracket of pH 0..14;
* iterates the ionic strength to self-consistency (plain fixed point, Davies 1962 with the
  0.3 coefficient) until it changes by less than 1e-12 relative.

Constants are the ones protolyte's built-in catalogue uses at 25 °C (phosphate 2.148, 7.198,
12.35 and acetate 4.756, ammonium 9.245: Goldberg, Kishore & Lennen, J. Phys. Chem. Ref. Data
31 (2002) 231, from memory; pKw 13.995, Marshall & Franck 1981), so the two programs solve the
same equations and their pH values can be compared.

Usage:
    python3 benches/python_reference.py RECIPES.jsonl [RESULTS.jsonl]

Prints one JSON object: recipes solved, seconds, recipes per second and, when protolyte's
results are given, the largest |pH difference| between the two programs.
"""

import json
import math
import sys
import time

import numpy as np
from scipy.optimize import brentq

RHO = 0.997047  # kg/L, water at 25 °C
LOG_KW = -13.995
# Debye–Hückel A at 25 °C from water's permittivity (Malmberg & Maryott 1956) and density.
EPS = 87.740 - 0.40008 * 25 + 9.398e-4 * 25**2 - 1.410e-6 * 25**3
A = 1.82483e6 * math.sqrt(RHO) / (EPS * 298.15) ** 1.5

# Families: stepwise pKa (most protonated first) and the charge of the most protonated form.
FAMILIES = {
    "phosphate": ([2.148, 7.198, 12.35], 0),
    "acetate": ([4.756], 0),
    "ammonia": ([9.245], 1),
}
# Reagents: (family, protons bound) or None, and counter-ions as (charge, count).
REAGENTS = {
    "sodium dihydrogen phosphate": (("phosphate", 2), [(1, 1)]),
    "disodium hydrogen phosphate": (("phosphate", 1), [(1, 2)]),
    "acetic acid": (("acetate", 1), []),
    "ammonium chloride": (("ammonia", 1), [(-1, 1)]),
    "sodium chloride": (None, [(1, 1), (-1, 1)]),
}


def log_gamma(z2, ionic):
    """Davies (1962): log10 gamma = -A z^2 (sqrt(I)/(1+sqrt(I)) - 0.3 I)."""
    s = math.sqrt(ionic)
    return -A * z2 * (s / (1.0 + s) - 0.3 * ionic)


def solve(recipe):
    totals = {name: 0.0 for name in FAMILIES}
    ions = []  # (charge, molality) of spectator ions
    for line in recipe["reagents"]:
        molal = line["millimolar"] * 1e-3 / RHO
        form, counter = REAGENTS[line["reagent"]]
        if form is not None:
            totals[form[0]] += molal
        for z, n in counter:
            ions.append((z, n * molal))
    spectator_charge = sum(z * m for z, m in ions)
    spectator_ionic = 0.5 * sum(z * z * m for z, m in ions)

    # Per family: cumulative log beta of each form j (j protons) and its charge.
    fams = []
    for name, (pkas, ztop) in FAMILIES.items():
        if totals[name] <= 0:
            continue
        n = len(pkas)
        logb = np.array([sum(pkas[n - j:]) for j in range(n + 1)])
        z = np.array([ztop - (n - j) for j in range(n + 1)], dtype=float)
        fams.append((totals[name], logb, z, np.arange(n + 1)))

    ionic = spectator_ionic + 1e-7
    ph = 7.0
    for _ in range(200):
        lg1 = log_gamma(1, ionic)

        def charge(ph_value):
            log_ah = -ph_value
            total = spectator_charge
            total += 10 ** (log_ah - lg1)  # H+
            total -= 10 ** (LOG_KW - log_ah - lg1)  # OH-
            for t, logb, z, j in fams:
                w = logb + j * log_ah - log_gamma(1, ionic) * z * z
                w = 10 ** (w - w.max())
                total += t * float(np.dot(w, z) / w.sum())
            return total

        ph = brentq(charge, 0.0, 14.0, xtol=1e-14, rtol=1e-14, maxiter=200)
        # New ionic strength from the species at this pH.
        log_ah = -ph
        new = spectator_ionic
        new += 0.5 * 10 ** (log_ah - lg1) + 0.5 * 10 ** (LOG_KW - log_ah - lg1)
        for t, logb, z, j in fams:
            w = logb + j * log_ah - log_gamma(1, ionic) * z * z
            w = 10 ** (w - w.max())
            new += 0.5 * t * float(np.dot(w, z * z) / w.sum())
        if abs(new - ionic) <= 1e-12 * ionic:
            ionic = new
            break
        ionic = new
    return ph


def main():
    if len(sys.argv) < 2:
        print(__doc__, file=sys.stderr)
        sys.exit(2)
    with open(sys.argv[1]) as f:
        recipes = [json.loads(line) for line in f if line.strip()]
    start = time.perf_counter()
    phs = [solve(r) for r in recipes]
    seconds = time.perf_counter() - start
    report = {
        "recipes": len(recipes),
        "seconds": round(seconds, 3),
        "recipes_per_second": round(len(recipes) / seconds, 1),
    }
    if len(sys.argv) > 2:
        worst = 0.0
        with open(sys.argv[2]) as f:
            for ph, line in zip(phs, f):
                result = json.loads(line)
                theirs = find_ph(result)
                if theirs is not None:
                    worst = max(worst, abs(theirs - ph))
        report["max_abs_ph_difference"] = worst
    print(json.dumps(report))


def find_ph(obj):
    """The pH in one protolyte result record, wherever the record keeps it."""
    if isinstance(obj, dict):
        for key in ("ph", "pH"):
            if isinstance(obj.get(key), (int, float)):
                return float(obj[key])
        for value in obj.values():
            found = find_ph(value)
            if found is not None:
                return found
    return None


if __name__ == "__main__":
    main()
