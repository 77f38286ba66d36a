"""The check product: device and load, as the user names them, to a stability verdict.

Data flow: the one preparation (``products.pair``: read, prepare, align, evaluate netlists) →
the one judgement (``analysis.judgement``), described in words (``analysis.reasons``) → frozen
:class:`~oneport.analysis.result.CheckResult`. It never prints, plots or exits.
"""

from __future__ import annotations

from dataclasses import replace
from pathlib import Path
from typing import TYPE_CHECKING, Any, overload

from ..analysis.reasons import describe
from ..analysis.result import CheckResult
from ..errors import InputError
from ..reading.preparation import PortSetup, PreparedPort
from ..reading.touchstone import OnePort
from .pair import PreparedPair, prepare_device, prepare_pair

if TYPE_CHECKING:
    from ..analysis.small_gain import BoundResult

OneportSource = str | Path | OnePort | PreparedPort | Any


@overload
def check(
    device: OneportSource,
    load: OneportSource,
    *,
    load_return_loss_db: None = None,
    measurement_impedance_ohm: float | str | None = None,
    device_dc_resistance_ohm: float | str | None = None,
    load_dc_resistance_ohm: float | str | None = None,
    gamma_uncertainty: float | tuple[float, float] | str | None = None,
    frequency_hz: Any = None,
    terminate: str | Path | None = None,
    terminate_impedance_ohm: float | str | None = None,
    terminated_port: int = 2,
    differential_ports: str | Any = None,
    device_fixture: str | Path | None = None,
    device_delay_s: float | str | None = None,
    load_fixture: str | Path | None = None,
    load_delay_s: float | str | None = None,
    poles: bool = False,
) -> CheckResult: ...


@overload
def check(
    device: OneportSource,
    load: None = None,
    *,
    load_return_loss_db: float | str,
    measurement_impedance_ohm: float | str | None = None,
    device_dc_resistance_ohm: float | str | None = None,
    load_dc_resistance_ohm: float | str | None = None,
    gamma_uncertainty: float | tuple[float, float] | str | None = None,
    frequency_hz: Any = None,
    terminate: str | Path | None = None,
    terminate_impedance_ohm: float | str | None = None,
    terminated_port: int = 2,
    differential_ports: str | Any = None,
    device_fixture: str | Path | None = None,
    device_delay_s: float | str | None = None,
    load_fixture: str | Path | None = None,
    load_delay_s: float | str | None = None,
    poles: bool = False,
) -> BoundResult: ...


def check(
    device: OneportSource,
    load: OneportSource = None,
    *,
    load_return_loss_db: float | str | None = None,
    measurement_impedance_ohm: float | str | None = None,
    device_dc_resistance_ohm: float | str | None = None,
    load_dc_resistance_ohm: float | str | None = None,
    gamma_uncertainty: float | tuple[float, float] | str | None = None,
    frequency_hz: Any = None,
    terminate: str | Path | None = None,
    terminate_impedance_ohm: float | str | None = None,
    terminated_port: int = 2,
    differential_ports: str | Any = None,
    device_fixture: str | Path | None = None,
    device_delay_s: float | str | None = None,
    load_fixture: str | Path | None = None,
    load_delay_s: float | str | None = None,
    poles: bool = False,
) -> CheckResult | BoundResult:
    """Will ``device`` oscillate (or latch up) when connected to ``load``? Small-signal check.

    Quantities are numbers in SI units or text with a unit (``"50ohm"``, ``"12ps"``,
    ``"15dB"``), read as ``oneport check`` reads its options; bad input raises
    :class:`~oneport.errors.InputError` with the command's one line.

    Parameters
    ----------
    device, load : path, OnePort, PreparedPort, Circuit or skrf.Network
        The negative-resistance device and the network it faces, as one-ports. A netlist
        (``.cir`` path or :class:`oneport.circuit.Circuit`) is evaluated on the other side's
        grid in the analysis impedance, and its own natural frequencies terminated there are
        checked (the premise) and counted if any lie in the right half plane.
    load_return_loss_db : float or str, optional
        Instead of ``load``: is the device stable into *every* passive load with at least this
        return loss (dB, ``"15dB"``)? The small-gain bound; returns a :class:`BoundResult`.
    measurement_impedance_ohm : float or str, optional
        The impedance the device was really measured in (VNA port impedance), Ω, if its file
        was renormalised afterwards; default: the device file's reference. The load is brought
        to this impedance, never the device to the load's.
    device_dc_resistance_ohm, load_dc_resistance_ohm : float or str, optional
        DC facts that close the contour towards DC: the device's I–V slope at the bias point
        and the bias network's DC resistance, Ω (give both, or one when the other side is a
        netlist, whose own DC value is then used).
    gamma_uncertainty : float, (float, float) or str, optional
        Worst-case absolute error of |Γ|, for both sides or (device, load) (``"0.01,0.02"``).
    frequency_hz : array_like, optional
        The grid, Hz, when both sides are netlists (:func:`oneport.frequency_grid`); default:
        chosen from their natural frequencies, from DC to beyond the last of them.
    terminate, terminate_impedance_ohm, terminated_port : optional
        A two-port device file becomes a one-port with port ``terminated_port`` (1 or 2,
        default 2) terminated in a one-port file or a resistance (Ω).
    differential_ports : str or pairs, optional
        A balanced device measured single-ended: its differential one-port (``"1,2"``).
    device_fixture, load_fixture : path, optional
        A measured two-port fixture (port 1 at the instrument) de-embedded from that side.
    device_delay_s, load_delay_s : float or str, optional
        Add (negative: remove) a lossless line of this one-way delay (s, ``"12ps"``).
    poles : bool
        Add the second opinion: a rational fit of 1 − L, its natural frequencies beside the
        count (``second_opinion`` on the result, ``poles`` in its JSON).

    Returns
    -------
    CheckResult or BoundResult
        Verdict, Nyquist count, crossings, bands, margins, warnings and cautions, with arrays
        (a :class:`BoundResult` for ``load_return_loss_db``).

    Examples
    --------
    A bare −30 Ω (no dynamics) in series with 0.5 nH, into 100 Ω: the device keeps its gain
    to the top of a 5 GHz sweep, so nothing founds the closure towards infinity there; swept
    to 200 GHz, where the inductance has taken the gain away, it is stable.

    >>> import skrf
    >>> def sides(top_ghz):
    ...     frequency = skrf.Frequency(0.1, top_ghz, 2001, unit="GHz")
    ...     media = skrf.media.DefinedGammaZ0(frequency, z0=50)
    ...     device = media.resistor(-30) ** media.inductor(0.5e-9) ** media.short()
    ...     return device, media.resistor(100) ** media.short()
    >>> check(*sides(5)).verdict
    'inconclusive'
    >>> result = check(*sides(200))
    >>> result.verdict, result.encirclements
    ('stable', 0)

    Quantities may carry their units; a bad one fails with the command's line:

    >>> check(*sides(200), measurement_impedance_ohm="50ohm").verdict
    'stable'
    >>> check(*sides(200), measurement_impedance_ohm="fifty")
    Traceback (most recent call last):
    ...
    oneport.errors.InputError: --measurement-impedance: cannot read 'fifty' as a resistance; \
give a number with an optional SI prefix and unit, e.g. 50ohm
    """
    from .options import pair_arguments, positive_resistance, return_loss, uncertainty

    device_setup = device_port_setup(
        terminate=terminate,
        terminate_impedance_ohm=terminate_impedance_ohm,
        terminated_port=terminated_port,
        differential_ports=differential_ports,
        fixture=device_fixture,
        delay_s=device_delay_s,
    )
    if load_return_loss_db is not None:
        if load is not None:
            raise InputError("check: give a load or --load-return-loss, not both")
        given = {
            "--poles": poles,
            "--load-fixture": load_fixture is not None,
            "--load-delay": load_delay_s is not None,
            "--device-dc-resistance": device_dc_resistance_ohm is not None,
            "--load-dc-resistance": load_dc_resistance_ohm is not None,
            "--start/--stop (a netlist grid)": frequency_hz is not None,
        }
        if any(given.values()):
            listed = ", ".join(name for name, on in given.items() if on)
            raise InputError(f"{listed}: go with --load, not with --load-return-loss")
        least = return_loss(load_return_loss_db, "--load-return-loss")
        errors = uncertainty(gamma_uncertainty)
        return check_load_class(
            device,
            least,
            measurement_impedance_ohm=positive_resistance(
                measurement_impedance_ohm, "--measurement-impedance"
            ),
            device_uncertainty=float(errors[0] if isinstance(errors, tuple) else errors or 0.0),
            device_setup=device_setup,
        )
    if load is None:
        raise InputError("check: give the load (--load FILE) or --load-return-loss DB")
    result = judge_prepared(
        prepare_pair(
            device,
            load,
            **pair_arguments(
                measurement_impedance_ohm=measurement_impedance_ohm,
                device_dc_resistance_ohm=device_dc_resistance_ohm,
                load_dc_resistance_ohm=load_dc_resistance_ohm,
                gamma_uncertainty=gamma_uncertainty,
                frequency_hz=frequency_hz,
                load_fixture=load_fixture,
                load_delay_s=load_delay_s,
            ),
            device_setup=device_setup,
        )
    )
    return with_second_opinion(result) if poles else result


def device_port_setup(**given: Any) -> PortSetup:
    """The device side's :class:`PortSetup` from the check's keywords (see :func:`check`)."""
    from .options import port_setup

    return port_setup("device", **given)


def with_second_opinion(result: CheckResult) -> CheckResult:
    """The check with the pole–zero identification of F = 1 − L beside its count
    (``oneport check --poles``): the fit on ``second_opinion``, and where it disagrees with the
    count, its warning among the check's."""
    from ..analysis.pole_zero import identify_natural_frequencies, with_count_check

    fitted = identify_natural_frequencies(
        result.frequency_hz,
        1.0 - result.loop_gain,
        reference_impedance_ohm=result.reference_impedance_ohm,
        inputs=result.inputs,
    )
    second = with_count_check(fitted, result)
    disagreement = tuple(w for w in second.warnings if w.code == "pole-count-disagrees")
    return replace(result, second_opinion=second, warnings=result.warnings + disagreement)


def judge_prepared(pair: PreparedPair) -> CheckResult:
    """The single check of a prepared pair: the one judgement, described in words."""
    return describe(
        pair.frequency_hz,
        pair.gamma_device,
        pair.gamma_load,
        pair.reference_impedance_ohm,
        pair.facts,
        pair.context,
    )


def check_load_class(
    device: OneportSource,
    load_return_loss_db: float,
    *,
    measurement_impedance_ohm: float | None = None,
    device_uncertainty: float = 0.0,
    device_setup: PortSetup | None = None,
) -> BoundResult:
    """Is ``device`` stable into *every* passive load with at least ``load_return_loss_db`` of
    return loss? The one small-gain rule (:mod:`oneport.analysis.small_gain`), on the device as
    the one preparation reads it; ``amplifier --port-return-loss`` asks the same."""
    from ..analysis.small_gain import check_return_loss

    prepared = prepare_device(
        device, measurement_impedance_ohm=measurement_impedance_ohm, device_setup=device_setup
    )
    result = check_return_loss(
        prepared.port, load_return_loss_db, prepared.record, device_uncertainty
    )
    return replace(result, warnings=result.warnings + prepared.findings)
