"""Textbook formulas shared by the independent check scripts in this folder
(written from the definitions, not from ohmsheet)."""
import math

J = 1j
SQ3 = math.sqrt(3)


def tanphi(pf):
    """tan φ of a signed power factor (+ lagging, − leading)."""
    t = math.sqrt(1 - pf * pf) / abs(pf)
    return t if pf > 0 else -t


def par(*zs):
    """Impedances in parallel: the reciprocal of the summed reciprocals."""
    return 1 / sum(1 / z for z in zs)
