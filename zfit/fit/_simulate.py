"""The one simulated measurement: a known circuit as an instrument would measure it.

The planner, the simulated lot, the benchmarks and the demo all measure an
invented part through this module, so that the physics of a simulated
measurement (how the part is connected, what noise the instrument adds)
exists once.  The connection formulas are those of
`zfit.data._connection`; the noise is the readers' model
(`InstrumentNoise`): complex-circular Gaussian of standard deviation
``rel |x| + floor`` on the quantity the instrument measures (S for a network
analyser, Z for an impedance-analyser table).

References
----------
.. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley, 2012, sec. 4.3-4.4
   (S-parameters of a shunt admittance and a series impedance, Table 4.2).
"""

from __future__ import annotations

import math

import numpy as np

from .._errors import ZfitInputError
from ..data._connection import NA_CONNECTIONS, InstrumentNoise, impedance_from_s, s_from_impedance, sigma_z_from_s

__all__ = [
    "SIMULATED_CONNECTIONS",
    "circular_noise",
    "measured_s",
    "measured_two_port",
    "measured_impedance",
    "simulated_sweep",
]

#: The ways a simulated part can be measured; ``impedance`` is an analyser table.
SIMULATED_CONNECTIONS = (*NA_CONNECTIONS, "impedance")


def circular_noise(rng: np.random.Generator, n: int) -> np.ndarray:
    """Return `n` draws of unit-variance complex-circular Gaussian noise.

    Real and imaginary parts are independent with variance 1/2 each, so
    that ``E|e|^2 = 1``.

    Parameters
    ----------
    rng : numpy.random.Generator
        The seeded generator (real part drawn first, then the imaginary part).
    n : int
        Number of draws.
    """
    return (rng.standard_normal(n) + 1j * rng.standard_normal(n)) / math.sqrt(2.0)


def measured_s(z, connection: str, noise: InstrumentNoise, reference_ohm: float = 50.0, rng=None,
               unit_noise=None) -> np.ndarray:
    """Return the S11 (reflection) or S21 (thru) an analyser reads on impedance `z`.

    Parameters
    ----------
    z : array_like of complex
        The part's impedance, ohm.
    connection : {'reflection', 'shunt-thru', 'series-thru'}
        How the part is connected.
    noise : InstrumentNoise
        Noise on S.
    reference_ohm : float
        Reference impedance of the ports, ohm.
    rng : numpy.random.Generator, optional
        Draws the noise; None (and no `unit_noise`): the ideal reading.
    unit_noise : array_like of complex, optional
        Unit complex-circular draws to scale instead of drawing from `rng`.
    """
    s = s_from_impedance(z, connection, reference_ohm)
    if unit_noise is None and rng is not None:
        unit_noise = circular_noise(rng, s.size)
    if unit_noise is None:
        return s
    return s + noise.sigma(s) * unit_noise


def measured_two_port(z, connection: str, noise: InstrumentNoise, reference_ohm: float = 50.0,
                      rng=None) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Return ``(S11, S21, S12, S22)`` of a part in a shunt-thru or series-thru fixture.

    The fixture is symmetric and reciprocal: ``S11 = S22 = S21 - 1`` for a
    shunt part and ``1 - S21`` for a series part (ABCD of a shunt admittance
    or a series impedance, Pozar 2012, Table 4.2).  Each of the four
    readings gets noise of its own, S21 first.

    Parameters
    ----------
    z : array_like of complex
        The part's impedance, ohm.
    connection : {'shunt-thru', 'series-thru'}
        The fixture.
    noise : InstrumentNoise
        Noise on each S.
    reference_ohm : float
        Reference impedance of the ports, ohm.
    rng : numpy.random.Generator, optional
        Draws the noise; None: the ideal readings.
    """
    if connection not in ("shunt-thru", "series-thru"):
        raise ZfitInputError(f"a two-port fixture is shunt-thru or series-thru, not {connection!r}")
    s21 = s_from_impedance(z, connection, reference_ohm)
    s11 = s21 - 1.0 if connection == "shunt-thru" else 1.0 - s21
    if rng is None:
        return s11, s21, s21, s11
    # S21 is read with the first draw; the four readings then draw their own
    # and S21's own goes unused, which keeps seeded lots as they were written.
    first = circular_noise(rng, s21.size)
    own = [circular_noise(rng, s21.size) for _ in range(4)]
    own[1] = first
    return tuple(sp + noise.sigma(sp) * e for sp, e in zip((s11, s21, s21, s11), own))


def measured_impedance(z, noise: InstrumentNoise, rng=None, unit_noise=None) -> np.ndarray:
    """Return the impedance an impedance analyser reads on `z`, with noise on Z.

    Parameters
    ----------
    z : array_like of complex
        The part's impedance, ohm.
    noise : InstrumentNoise
        Noise on Z (``rel |Z| + floor`` ohm).
    rng : numpy.random.Generator, optional
        Draws the noise; None (and no `unit_noise`): the ideal reading.
    unit_noise : array_like of complex, optional
        Unit complex-circular draws to scale instead of drawing from `rng`.
    """
    z = np.asarray(z, dtype=complex)
    if unit_noise is None and rng is not None:
        unit_noise = circular_noise(rng, z.size)
    if unit_noise is None:
        return z
    return z + noise.sigma(z) * unit_noise


def simulated_sweep(model, params, connection, f_hz, noise, reference_ohm=50.0, rng=None):
    """Return the sweep a connection would measure on the circuit, with or without noise.

    Parameters
    ----------
    model : {'inductor', 'capacitor'}
        The equivalent circuit.
    params : mapping
        Its values, SI units.
    connection : str
        One of `SIMULATED_CONNECTIONS`.
    f_hz : array_like
        Frequencies, Hz.
    noise : InstrumentNoise
        On S for the analyser connections, on Z for ``"impedance"``.
    reference_ohm : float
        Reference impedance, ohm.
    rng : numpy.random.Generator, optional
        Draws circular Gaussian noise of the model's size; None: no noise.

    Returns
    -------
    Sweep
        Sigma computed from the (noisy) measured values, as a reader would.
    """
    from ._circuits import circuit_impedance
    from ..data._sweep import Sweep

    f = np.asarray(f_hz, dtype=float)
    z = np.asarray(circuit_impedance(model, params, f), dtype=complex)
    if connection in NA_CONNECTIONS:
        s = measured_s(z, connection, noise, reference_ohm, rng)
        zm = impedance_from_s(s, connection, reference_ohm)
        sig = sigma_z_from_s(s, connection, reference_ohm, noise)
        return Sweep(f, zm, sig, source=f"simulated {connection}", connection=connection, reference_ohm=reference_ohm,
                     data_format="simulated", noise_model=noise.describe("S"), s_param=s, noise=noise)
    if connection != "impedance":
        raise ZfitInputError(f"unknown connection {connection!r}; use one of {', '.join(SIMULATED_CONNECTIONS)}")
    z = measured_impedance(z, noise, rng)
    return Sweep(f, z, noise.sigma(z), source="simulated analyser table", connection="impedance",
                 data_format="simulated", noise_model=noise.describe("Z"), noise=noise)
