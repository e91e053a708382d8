"""Generate tests/reference/fresnel_mpmath.csv: Fresnel integrals C(x), S(x) (A&S 7.3.1 convention,
C(x) = ∫0^x cos(πt²/2) dt) at 30 significant digits from mpmath (PyPI), an independent reference.

Run from the repo root:  python3 tests/py/gen_fresnel.py > tests/reference/fresnel_mpmath.csv
"""
import mpmath

mpmath.mp.dps = 30
xs = [i / 20 for i in range(0, 161)] + [-0.7, -2.3, 9.5, 12.25, 20.0]
print("x,C,S")
for x in xs:
    print(f"{x!r},{mpmath.nstr(mpmath.fresnelc(x), 20)},{mpmath.nstr(mpmath.fresnels(x), 20)}")
