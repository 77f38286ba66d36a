"""Large-signal operating points of a device line against a load: Kurokawa's conditions.

With the total immittance W(p, f) of the loop in the chosen form (admittance: Y_T = Yd + YL,
G_T + jB_T, amplitude = port peak voltage; impedance: Z_T = Zd + ZL, R_T + jX_T, amplitude =
port peak current), an operating point is W = 0 (equivalently Γd·ΓL = 1). All solutions in the
data are sought: the real and imaginary parts of W are sampled on a (level, frequency) grid,
every cell where both change sign is a bracket, and each bracket is refined on the two real
equations by a bounded solver whose trial points never leave the data (the device line has
no meaning outside it); converged points are kept once. At each point, with A the form's port
amplitude,

    S = (∂Re W/∂A)(∂Im W/∂ω) − (∂Im W/∂A)(∂Re W/∂ω)  > 0  (stable),

and amplitude perturbations decay at A0·S/|∂W/∂ω|². Derivatives are central differences on the
smooth (spline or analytic) lines. A level parameter p other than A is converted exactly: with
A = a(p, ω), ∂W/∂A = (∂W/∂p)/(∂a/∂p) and ∂W/∂ω|_A = ∂W/∂ω|_p − (∂W/∂A)(∂a/∂ω); the sign of S
survives the change of variable (S_p = S_A·∂a/∂p), the rate does not. Whether the circuit
starts from noise is not judged here: that is the small-signal Nyquist count's (the analysis
calls the check's judgement). This room computes only.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .lines import DeviceLine, LoadLine, Surface

FORMS = ("admittance", "impedance")
#: Residual |W|·scale below which a refined point counts as a solution.
RESIDUAL_TOLERANCE = 1e-8
#: |S| / (|∂W/∂A|·|∂W/∂ω|) below this: the lines meet nearly tangentially (marginal).
MARGINAL_SINE = 1e-3
_MAXIMUM_REFINEMENTS = 400
_MAXIMUM_EVALUATIONS = 200  # per refinement
_NOT_FINITE = 1e30  # stands for a residual at a pole of W
_STEP_FRACTION = 1e-3  # central-difference step as a fraction of the local grid step


@dataclass(frozen=True)
class Loop:
    """The device line against the load locus in one form.

    Attributes
    ----------
    device : DeviceLine
    load : LoadLine
    form : str
        ``"admittance"`` or ``"impedance"``.
    """

    device: DeviceLine
    load: LoadLine
    form: str

    def __post_init__(self) -> None:
        if self.form not in FORMS:
            raise ValueError(f"form must be one of {FORMS}, was {self.form!r}")

    @property
    def scale(self) -> float:
        """Factor making W dimensionless: Z0 (admittance form) or 1/Z0 (impedance form)."""
        z0 = self.device.reference_impedance_ohm
        return z0 if self.form == "admittance" else 1.0 / z0

    def device_immittance(self, parameter: np.ndarray, frequency_hz: np.ndarray) -> np.ndarray:
        """Yd (S) or Zd (Ω), by form."""
        admittance = self.device.admittance(parameter, frequency_hz)
        if self.form == "admittance":
            return admittance
        with np.errstate(divide="ignore", invalid="ignore"):
            result: np.ndarray = 1.0 / admittance
        return result

    def load_immittance(self, frequency_hz: np.ndarray) -> np.ndarray:
        """YL (S) or ZL (Ω), by form."""
        if self.form == "admittance":
            return self.load.admittance(frequency_hz)
        return self.load.impedance(frequency_hz)

    def total(self, parameter: np.ndarray, frequency_hz: np.ndarray) -> np.ndarray:
        """W(p, f) = Y_T (S) or Z_T (Ω)."""
        return self.device_immittance(parameter, frequency_hz) + self.load_immittance(frequency_hz)

    def amplitude(self, parameter: np.ndarray, frequency_hz: np.ndarray) -> np.ndarray:
        """The form's port amplitude: peak voltage (V) or peak current (A)."""
        voltage = self.device.port_voltage(parameter, frequency_hz)
        if self.form == "admittance":
            return voltage
        result: np.ndarray = voltage * np.abs(self.device.admittance(parameter, frequency_hz))
        return result


@dataclass(frozen=True)
class KurokawaFigures:
    """Kurokawa's figures at one point (p, f) of the loop.

    Attributes
    ----------
    parameter, frequency_hz : float
        Where, in the device's level parameter and Hz.
    amplitude : float
        The form's port amplitude there (V or A).
    stable : bool
        S > 0, decided in the device's level variable p (whose sign is the form amplitude's
        whenever that amplitude rises with p, and which stays right when it does not).
    stability_index : float
        S in ``stability_variable``; > 0 is stable.
    stability_variable : str
        ``"form"`` (the form's port amplitude) or ``"level"`` (the device's level parameter,
        used when the form's amplitude does not rise with the level at this point).
    decay_rate_per_s : float or None
        A0·S/|∂W/∂ω|² in ``stability_variable``, 1/s; positive when perturbations decay; None
        when that variable is not an amplitude (a power in dBm).
    tangency : float
        S/(|∂W/∂A|·|∂W/∂ω|), the sine of the angle at which the device line and the load locus
        cross; near zero the verdict is marginal.
    crossing_angle_rad : float
        That angle, arg(conj(∂W/∂A)·∂W/∂ω), rad: S > 0 exactly when it lies in (0, π).
    amplitude_slope : float
        ∂A/∂p: the form's amplitude per unit of level parameter.
    residual : float
        |W|·scale at the point.
    """

    parameter: float
    frequency_hz: float
    amplitude: float
    stable: bool
    stability_index: float
    stability_variable: str
    decay_rate_per_s: float | None
    tangency: float
    crossing_angle_rad: float
    amplitude_slope: float
    residual: float


def operating_points(loop: Loop) -> list[KurokawaFigures]:
    """Every solution of W(p, f) = 0 inside the data, sorted by amplitude then frequency."""
    parameters = loop.device.parameter_grid
    frequencies = loop.device.frequency_hz
    values = loop.total(parameters[:, np.newaxis], frequencies[np.newaxis, :]) * loop.scale
    cells = np.argwhere(_brackets(values))
    corner_size = np.abs(values[cells[:, 0], cells[:, 1]]) + np.abs(
        values[cells[:, 0] + 1, cells[:, 1] + 1]
    )
    order = np.argsort(corner_size)[:_MAXIMUM_REFINEMENTS]
    found: list[tuple[float, float]] = []
    for row, column in cells[order]:
        cell = (parameters[row], parameters[row + 1], frequencies[column], frequencies[column + 1])
        if any(_inside(point, cell) for point in found):
            continue
        point = _refine(loop, cell)
        if point is not None and not any(_same(point, other, cell) for other in found):
            found.append(point)
    figures = [kurokawa_figures(loop, p, f) for p, f in found]
    return sorted(figures, key=lambda item: (item.amplitude, item.frequency_hz))


def _brackets(values: np.ndarray) -> np.ndarray:
    """Cells (between grid rows and columns) where both Re and Im change sign."""
    finite = np.isfinite(values)
    cells = finite[:-1, :-1] & finite[1:, :-1] & finite[:-1, 1:] & finite[1:, 1:]
    for part in (values.real, values.imag):
        corners = np.stack([part[:-1, :-1], part[1:, :-1], part[:-1, 1:], part[1:, 1:]])
        with np.errstate(invalid="ignore"):
            cells &= (np.nanmin(corners, axis=0) <= 0) & (np.nanmax(corners, axis=0) >= 0)
    result: np.ndarray = cells
    return result


def _refine(loop: Loop, cell: tuple[float, float, float, float]) -> tuple[float, float] | None:
    """Refine a bracket to a root of W, searching only inside the data.

    The device line is defined on the data's levels and frequencies and nowhere else (an I–V
    describing function has no meaning at a negative amplitude; a spline beyond the last level
    or frequency extrapolates), so every trial point must stay inside that box: a bounded
    trust-region least-squares solve (scipy.optimize.least_squares, ``trf``, whose iterates
    and finite-difference steps respect the bounds) from the cell's centre, in coordinates
    scaled by the cell. A root the box does not hold ends on its edge with a residual above
    the tolerance and is dropped.
    """
    from scipy.optimize import least_squares

    p_low, p_high, f_low, f_high = cell
    p_centre, f_centre = (p_low + p_high) / 2, (f_low + f_high) / 2
    p_step, f_step = p_high - p_low, f_high - f_low
    low, high = loop.device.parameter_range
    frequencies = loop.device.frequency_hz
    lower = np.array([(low - p_centre) / p_step, (frequencies[0] - f_centre) / f_step])
    upper = np.array([(high - p_centre) / p_step, (frequencies[-1] - f_centre) / f_step])

    def equations(x: np.ndarray) -> np.ndarray:
        value = complex(
            loop.total(np.array(p_centre + x[0] * p_step), np.array(f_centre + x[1] * f_step))
        )
        value *= loop.scale
        if not np.isfinite(value):
            return np.array([_NOT_FINITE, _NOT_FINITE])
        return np.array([value.real, value.imag])

    with np.errstate(all="ignore"):
        solution = least_squares(
            equations,
            np.zeros(2),
            bounds=(lower, upper),
            method="trf",
            xtol=1e-12,
            ftol=1e-15,
            gtol=1e-15,
            max_nfev=_MAXIMUM_EVALUATIONS,
        )
    x = np.clip(solution.x, lower, upper)
    if math.hypot(*equations(x)) > RESIDUAL_TOLERANCE:
        return None
    return float(p_centre + x[0] * p_step), float(f_centre + x[1] * f_step)


def _inside(point: tuple[float, float], cell: tuple[float, float, float, float]) -> bool:
    return cell[0] <= point[0] <= cell[1] and cell[2] <= point[1] <= cell[3]


def _same(
    point: tuple[float, float], other: tuple[float, float], cell: tuple[float, float, float, float]
) -> bool:
    return abs(point[0] - other[0]) <= 1e-4 * (cell[1] - cell[0]) and abs(
        point[1] - other[1]
    ) <= 1e-4 * (cell[3] - cell[2])


def kurokawa_figures(loop: Loop, parameter: float, frequency_hz: float) -> KurokawaFigures:
    """S, the decay rate and the amplitude at (p, f), in the form's port amplitude."""
    p_step, f_step = _steps(loop, parameter, frequency_hz)
    frequencies = loop.device.frequency_hz
    box = (*loop.device.parameter_range, float(frequencies[0]), float(frequencies[-1]))
    total, d_parameter, d_frequency = _derivatives(
        loop.total, parameter, frequency_hz, p_step, f_step, box
    )
    amplitude, a_parameter, a_frequency = _derivatives(
        loop.amplitude, parameter, frequency_hz, p_step, f_step, box
    )
    slope = float(np.real(a_parameter))
    d_omega_level = d_frequency / (2 * np.pi)
    index_level = _index(d_parameter, d_omega_level)
    if slope > 0:
        d_amplitude = d_parameter / slope
        d_omega = d_omega_level - d_amplitude * float(np.real(a_frequency)) / (2 * np.pi)
        index, variable, value = _index(d_amplitude, d_omega), "form", float(np.real(amplitude))
        rate: float | None = value * index / abs(d_omega) ** 2
    else:
        d_amplitude, d_omega, index, variable = d_parameter, d_omega_level, index_level, "level"
        is_amplitude = loop.device.parameter_quantity != "incident_power_dbm"
        rate = parameter * index / abs(d_omega) ** 2 if is_amplitude else None
    size = abs(d_amplitude) * abs(d_omega)
    return KurokawaFigures(
        parameter=parameter,
        frequency_hz=frequency_hz,
        amplitude=float(np.real(amplitude)),
        stable=index_level > 0,
        stability_index=index,
        stability_variable=variable,
        decay_rate_per_s=rate,
        tangency=index / size if size > 0 else 0.0,
        crossing_angle_rad=float(np.angle(np.conj(d_amplitude) * d_omega)),
        amplitude_slope=slope,
        residual=abs(complex(total)) * loop.scale,
    )


def _index(d_amplitude: complex, d_omega: complex) -> float:
    """S = Re'·Im_ω − Im'·Re_ω = Im(conj(∂W/∂A)·∂W/∂ω)."""
    return float(np.imag(np.conj(d_amplitude) * d_omega))


def _steps(loop: Loop, parameter: float, frequency_hz: float) -> tuple[float, float]:
    grid = loop.device.parameter_grid
    frequencies = loop.device.frequency_hz
    row = int(np.clip(np.searchsorted(grid, parameter), 1, grid.size - 1))
    column = int(np.clip(np.searchsorted(frequencies, frequency_hz), 1, frequencies.size - 1))
    return (
        _STEP_FRACTION * float(grid[row] - grid[row - 1]),
        _STEP_FRACTION * float(frequencies[column] - frequencies[column - 1]),
    )


def _derivatives(
    function: Surface,
    parameter: float,
    frequency_hz: float,
    p_step: float,
    f_step: float,
    box: tuple[float, float, float, float],
) -> tuple[complex, complex, complex]:
    """Value and differences in p and f of function(p, f), central inside the data and
    one-sided at its edges: the device line is not evaluated outside ``box`` (p_low, p_high,
    f_low, f_high), where it has no meaning (an I–V curve at a negative amplitude)."""

    def at(p: float, f: float) -> complex:
        return complex(function(np.array(p), np.array(f)))

    p_low, p_high, f_low, f_high = box
    below, above = max(parameter - p_step, p_low), min(parameter + p_step, p_high)
    left, right = max(frequency_hz - f_step, f_low), min(frequency_hz + f_step, f_high)
    value = at(parameter, frequency_hz)
    d_parameter = (at(above, frequency_hz) - at(below, frequency_hz)) / (above - below)
    d_frequency = (at(parameter, right) - at(parameter, left)) / (right - left)
    return value, d_parameter, d_frequency
