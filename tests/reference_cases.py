"""Reference cases that drive generic tests (STYLE lesson 11).

Each entry is ``(source, inputs, expected, rtol)``:

- ``source`` names where the expected value comes from, with the flag of
  REFERENCES.md: "CALC" (derived from first principles, reproducible),
  "CONF" (seen in the paper), "from memory" (MEM) or "common practice".
- ``inputs`` is a dict of keyword arguments of the function under test.
- ``expected`` is a float, or a tuple of floats for functions returning a tuple.
- ``rtol`` is the relative tolerance, chosen for the digits the source gives.

``RELATION_CASES`` maps a function name in `seismo.relations` to its list of
cases. Add an entry to put a new value under every generic test.
"""

from __future__ import annotations

__all__ = ["RELATION_CASES"]

_STELLO = "REFERENCES §3a, CALC with Stello et al. 2009 0.263/0.772"
_MOSSER12 = "REFERENCES §3b, CALC with Mosser et al. 2012 (from memory)"

# Values printed with four significant figures get rtol 1e-3.
RELATION_CASES: dict[str, list[tuple[str, dict, object, float]]] = {
    "dnu_from_numax": [
        (_STELLO, {"numax": 10.0}, 1.556, 1e-3),
        (_STELLO, {"numax": 30.0}, 3.633, 1e-3),
        (_STELLO, {"numax": 100.0}, 9.204, 1e-3),
        (_STELLO, {"numax": 200.0}, 15.716, 1e-3),
    ],
    "envelope_fwhm": [
        (_MOSSER12, {"numax": 30.0}, 13.17, 1e-3),
        (_MOSSER12, {"numax": 100.0}, 37.98, 1e-3),
    ],
    "granulation_parameters": [
        (
            "REFERENCES §3c, CALC with Kallinger et al. 2014 (from memory)",
            {"numax": 30.0},
            (8.588, 27.68, 426.2),
            1e-3,
        ),
        (
            "REFERENCES §3c, CALC with Kallinger et al. 2014 (from memory)",
            {"numax": 100.0},
            (27.61, 91.37, 204.7),
            1e-3,
        ),
    ],
    "harvey_norm": [
        ("REFERENCES §3c, CALC: 2√2/π", {"exponent": 4.0}, 0.900316, 1e-6),
        ("REFERENCES §3c, CALC: 2/π (Harvey 1985 Lorentzian)", {"exponent": 2.0}, 0.636620, 1e-6),
    ],
    "sinc_attenuation": [
        ("REFERENCES §3d table, CALC", {"freq": 25.0, "nyquist": 100.0}, 0.9496, 1e-3),
        ("REFERENCES §3d table, CALC", {"freq": 50.0, "nyquist": 100.0}, 0.8106, 1e-3),
        ("REFERENCES §3d table, CALC", {"freq": 75.0, "nyquist": 100.0}, 0.6150, 1e-3),
        ("REFERENCES §3d table, CALC: 4/π²", {"freq": 100.0, "nyquist": 100.0}, 0.405285, 1e-5),
        ("REFERENCES §9, CALC: Kepler LC Nyquist, η² = 4/π²", {"freq": 283.21, "nyquist": 283.21},
         0.405285, 1e-5),
    ],
    "eps_p_from_dnu": [
        ("Mosser et al. 2011 (from memory): 0.634 + 0.546 log Δν at Δν = 10", {"dnu": 10.0},
         1.180, 1e-9),
    ],
    "curvature_from_dnu": [
        ("Mosser et al. 2013 (from memory): 0.015 Δν^-0.32 at Δν = 1", {"dnu": 1.0}, 0.015, 1e-9),
    ],
    "d02_from_dnu": [
        ("Mosser et al. 2010/2011 (from memory): 0.121 + 0.035 log Δν at Δν = 10", {"dnu": 10.0},
         0.156, 1e-9),
    ],
    "d01_from_dnu": [
        ("Mosser et al. 2011 (from memory): −0.056 − 0.002 log Δν at Δν = 10", {"dnu": 10.0},
         -0.058, 1e-9),
    ],
}


# ---------------------------------------------------------------------------
# seismo.scaling: the worked vectors of REFERENCES §1b (CALC with the plain
# scaling relations and log g☉ = 4.4381; the reference values themselves are
# from memory). ``SCALING_CASES`` maps a function name in `seismo.scaling` to
# its cases, with the same entry structure as ``RELATION_CASES``.
# ---------------------------------------------------------------------------

__all__.append("SCALING_CASES")

_WORKED = "REFERENCES §1b worked vectors, CALC (reference set {} from memory)"


def _worked_cases(star, reference, mass, radius, logg):
    numax, dnu, teff = star
    source = _WORKED.format(reference)
    both = {"numax": numax, "dnu": dnu, "teff": teff, "reference": reference}
    return {
        "scaling_mass": (source, both, mass, 1e-3),
        "scaling_radius": (source, both, radius, 1e-3),
        "scaling_logg": (source, {"numax": numax, "teff": teff, "reference": reference},
                         logg, 1e-4),
    }


SCALING_CASES: dict[str, list[tuple[str, dict, object, float]]] = {
    "scaling_mass": [], "scaling_radius": [], "scaling_logg": [],
}
for _row in [
    ((30.0, 4.0, 4750.0), "huber2011", 0.8879, 10.043, 2.3827),
    ((30.0, 4.0, 4750.0), "mosser2013", 0.9343, 10.235, 2.3884),
    ((30.0, 4.0, 4750.0), "kallinger2010", 0.8580, 9.918, 2.3787),
    ((100.0, 9.0, 4800.0), "huber2011", 1.3034, 6.647, 2.9079),
    ((100.0, 9.0, 4800.0), "mosser2013", 1.3715, 6.774, 2.9135),
]:
    for _name, _case in _worked_cases(*_row).items():
        SCALING_CASES[_name].append(_case)
del _row, _name, _case
