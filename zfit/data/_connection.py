"""From a network analyser's S-parameter to a one-port impedance, with its noise.

Three ways of measuring a one-port with a two-port analyser (reference
impedance ``Z0`` on both ports):

``reflection``
    the part terminates port 1: ``S11 = (Z - Z0) / (Z + Z0)``, so
    ``Z = Z0 (1 + S11) / (1 - S11)``.
``shunt-thru``
    the part sits from the through line to ground:
    ``S21 = 2 Z / (2 Z + Z0)``, so ``Z = Z0 S21 / (2 (1 - S21))``.
``series-thru``
    the part sits in series between the ports:
    ``S21 = 2 Z0 / (2 Z0 + Z)``, so ``Z = 2 Z0 (1 - S21) / S21``.

The reflection formula is the definition of the reflection coefficient; the
two transmission formulas follow from the ABCD matrix of a shunt admittance
and of a series impedance (Pozar, *Microwave Engineering*, 4th ed., 2012,
Table 4.1 and Table 4.2).

The noise model is common practice for a calibrated analyser: complex
circular noise on the measured S-parameter with standard deviation
``rel * |S| + floor`` (a trace-noise term proportional to the signal plus a
receiver noise floor), carried to impedance to first order through
``|dZ/dS|``.  This is what makes a reflection measurement of milliohms, or a
shunt-thru measurement of kilohms, count for as little as it is worth.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .._errors import ZfitInputError

__all__ = [
    "NA_CONNECTIONS",
    "InstrumentNoise",
    "impedance_from_s",
    "dz_ds",
    "s_from_impedance",
    "sigma_z_from_s",
    "conditioning_warning",
]

#: Connections of a network analyser to a one-port part.
NA_CONNECTIONS = ("reflection", "shunt-thru", "series-thru")


@dataclass(frozen=True)
class InstrumentNoise:
    """Noise of a measurement, before it reaches impedance.

    Attributes
    ----------
    rel : float
        Relative noise: for S-parameters, the standard deviation of ``dS/|S|``
        (1e-3 is about 0.009 dB and 0.06 degrees of trace noise); for an
        impedance table, of ``dZ/|Z|`` (1e-3: an analyser's 0.1 % basic
        accuracy).  Both defaults are common practice, not a datasheet value.
    floor : float
        Absolute floor: for S-parameters, the receiver noise floor as a
        linear magnitude (1e-5 is -100 dB, common practice for a calibrated
        analyser at a narrow IF bandwidth); for impedance tables, in ohm.
    """

    rel: float = 1e-3
    floor: float = 1e-5

    def __post_init__(self):
        if not (self.rel >= 0 and self.floor >= 0 and (self.rel > 0 or self.floor > 0)):
            raise ZfitInputError(
                f"noise model needs --noise-rel >= 0 and --noise-floor >= 0, not both zero "
                f"(got {self.rel:g} and {self.floor:g})"
            )

    def sigma(self, value) -> np.ndarray:
        """Return the standard deviation (complex-circular) of a measured quantity.

        Parameters
        ----------
        value : array_like of complex
            The measured S-parameter (or impedance, for tables).
        """
        return self.rel * np.abs(value) + self.floor

    def describe(self, quantity: str) -> str:
        """Return one line that states the model, e.g. for ``zfit info``.

        Parameters
        ----------
        quantity : {'S', 'Z'}
            What the noise is on.
        """
        unit = "" if quantity == "S" else " ohm"
        return f"sigma({quantity}) = {self.rel:g} * |{quantity}| + {self.floor:g}{unit} (complex-circular)"


def _check(connection: str):
    if connection not in NA_CONNECTIONS:
        raise ZfitInputError(
            f"unknown connection {connection!r}; use reflection (S11 of the part on port 1), "
            "shunt-thru (S21, part from the through line to ground) or series-thru (S21, part in series between the ports)"
        )


def impedance_from_s(s, connection: str, z0: float = 50.0) -> np.ndarray:
    """Return the part's impedance (ohm) from its measured S11 or S21.

    Parameters
    ----------
    s : array_like of complex
        S11 for ``reflection``, S21 for the two transmission connections.
    connection : {'reflection', 'shunt-thru', 'series-thru'}
        How the part was connected.
    z0 : float
        Reference impedance of the ports in ohm.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed. Wiley, 2012,
       sections 4.3-4.4 (S, ABCD and their conversion).
    """
    _check(connection)
    s = np.asarray(s, dtype=complex)
    with np.errstate(divide="ignore", invalid="ignore"):
        if connection == "reflection":
            return z0 * (1 + s) / (1 - s)
        if connection == "shunt-thru":
            return z0 * s / (2 * (1 - s))
        return 2 * z0 * (1 - s) / s


def s_from_impedance(z, connection: str, z0: float = 50.0) -> np.ndarray:
    """Return the S11 or S21 an ideal analyser measures for impedance `z`.

    The inverse of `impedance_from_s`.

    Parameters
    ----------
    z : array_like of complex
        The part's impedance in ohm.
    connection : {'reflection', 'shunt-thru', 'series-thru'}
        How the part is connected.
    z0 : float
        Reference impedance of the ports in ohm.
    """
    _check(connection)
    z = np.asarray(z, dtype=complex)
    if connection == "reflection":
        return (z - z0) / (z + z0)
    if connection == "shunt-thru":
        return 2 * z / (2 * z + z0)
    return 2 * z0 / (2 * z0 + z)


def dz_ds(s, connection: str, z0: float = 50.0) -> np.ndarray:
    """Return the complex derivative dZ/dS of `impedance_from_s`.

    The conversions are holomorphic in S, so a complex-circular error ``dS``
    becomes ``dZ = (dZ/dS) dS``, again circular, with ``|dZ| = |dZ/dS| |dS|``.

    Parameters
    ----------
    s : array_like of complex
        The measured S-parameter.
    connection : {'reflection', 'shunt-thru', 'series-thru'}
        How the part is connected.
    z0 : float
        Reference impedance of the ports in ohm.
    """
    _check(connection)
    s = np.asarray(s, dtype=complex)
    with np.errstate(divide="ignore", invalid="ignore"):
        if connection == "reflection":
            return 2 * z0 / (1 - s) ** 2
        if connection == "shunt-thru":
            return z0 / (2 * (1 - s) ** 2)
        return -2 * z0 / s**2


def ds_dz(z, connection: str, z0: float = 50.0) -> np.ndarray:
    """Return the complex derivative dS/dZ of `s_from_impedance`.

    How a model's impedance moves the S-parameter it predicts; used to fit
    on S (`zfit.fit._lsq.Observation`).

    Parameters
    ----------
    z : array_like of complex
        The part's impedance in ohm.
    connection : {'reflection', 'shunt-thru', 'series-thru'}
        How the part is connected.
    z0 : float
        Reference impedance of the ports in ohm.
    """
    _check(connection)
    z = np.asarray(z, dtype=complex)
    if connection == "reflection":
        d = z + z0
        return 2 * z0 / (d * d)
    if connection == "shunt-thru":
        d = 2 * z + z0
        return 2 * z0 / (d * d)
    d = 2 * z0 + z
    return -2 * z0 / (d * d)


def sigma_z_from_s(s, connection: str, z0: float = 50.0, noise: InstrumentNoise = InstrumentNoise()) -> np.ndarray:
    """Return the standard uncertainty of Z (ohm) implied by noise on S.

    Parameters
    ----------
    s : array_like of complex
        The measured S-parameter.
    connection : {'reflection', 'shunt-thru', 'series-thru'}
        How the part was connected.
    z0 : float
        Reference impedance in ohm.
    noise : InstrumentNoise
        Noise of the S-parameter measurement.
    """
    return np.abs(dz_ds(s, connection, z0)) * noise.sigma(s)


def conditioning_warning(s, connection: str) -> str | None:
    """Return a one-line warning when the connection is poor for this part.

    A reflection measurement with ``|S11|`` near 1 (the part far from Z0), a
    shunt-thru measurement with ``|S21|`` near 1 (a high impedance across the
    line) and a series-thru measurement with ``|S21|`` near 1 (a low
    impedance in series) all put the part's impedance in the small
    difference ``1 - S``, where the analyser's noise dominates.

    Parameters
    ----------
    s : array_like of complex
        The measured S-parameter.
    connection : {'reflection', 'shunt-thru', 'series-thru'}
        How the part is connected.
    """
    _check(connection)
    s = np.asarray(s, dtype=complex)
    dist = np.abs(1 - s) if connection != "reflection" else np.minimum(np.abs(1 - s), np.abs(1 + s))
    frac = float(np.mean(dist < 0.02))
    if frac < 0.2:
        return None
    hint = {
        "reflection": "|S11| is within 2 % of 1 (the part is far from the reference impedance)",
        "shunt-thru": "|S21| is within 2 % of 1 (a high impedance across the line)",
        "series-thru": "|S21| is within 2 % of 1 (a low impedance in series)",
    }[connection]
    return f"poorly conditioned {connection} measurement at {100 * frac:.0f} % of the points: {hint}; expect large uncertainties"
