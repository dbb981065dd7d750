#!/usr/bin/python3
"""Compares moonwright's constants (printed by print_constants) with Astropy's CODATA 2018 and
IAU 2015 constant sets. Usage: check_constants.py <path to print_constants>."""
import subprocess
import sys

from astropy.constants import codata2018, iau2015

# Reference values: astropy.constants.codata2018 (CODATA 2018) and astropy.constants.iau2015
# (IAU 2015 Resolution B3 nominal values; au from IAU 2012 Resolution B2).
REFERENCE = {
    "G": codata2018.G,
    "au": iau2015.au,
    "GM_sun": iau2015.GM_sun,
    "GM_earth": iau2015.GM_earth,
    "GM_jup": iau2015.GM_jup,
    "R_sun": iau2015.R_sun,
    "R_earth": iau2015.R_earth,
    "R_jup": iau2015.R_jup,
    "L_sun": iau2015.L_sun,
    # Masses derived as GM/G in both (IAU 2015 B3 recommends this; Astropy does the same).
    "M_sun": iau2015.M_sun,
    "M_earth": iau2015.M_earth,
    "M_jup": iau2015.M_jup,
}
TOLERANCE = 1e-12


def main() -> int:
    out = subprocess.run([sys.argv[1]], check=True, capture_output=True, text=True).stdout
    ours = {}
    for line in out.splitlines():
        name, value = line.split()
        ours[name] = float(value)
    failures = 0
    for name, ref in REFERENCE.items():
        if name not in ours:
            print(f"MISSING {name}: not printed by print_constants")
            failures += 1
            continue
        expected = ref.si.value
        rel = abs(ours[name] - expected) / abs(expected)
        status = "ok" if rel <= TOLERANCE else "MISMATCH"
        if rel > TOLERANCE:
            failures += 1
        print(f"{status:8} {name:9} moonwright {ours[name]:.17g}  astropy {expected:.17g}"
              f"  rel {rel:.2e}  ({ref.reference})")
    print(f"{len(REFERENCE) - failures}/{len(REFERENCE)} constants agree to {TOLERANCE:g}")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
