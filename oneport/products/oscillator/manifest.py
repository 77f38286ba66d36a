"""Reading the device description of ``oneport oscillator``: a small TOML manifest.

Two kinds (docs/oscillator.md has the full layout):

- ``kind = "drive-levels"``: Touchstone one-ports of the device measured at several drive
  levels, each ``[[level]]`` with a ``file`` and one amplitude key (``incident_power_dbm``,
  ``peak_voltage_v`` or ``peak_current_a``).
- ``kind = "iv-curve"``: a quasi-static I–V curve (``[iv]``: a CSV ``table``,
  ``polynomial_coefficients`` about the bias, or ``model = "tunnel-diode"``) at
  ``bias_voltage_v``, with lumped ``[parasitics]``.

This room is an edge: it reads and validates user files and returns frozen records. Every
problem is one line naming the manifest, the key, the bad value and what is accepted. It never
evaluates user text: TOML through ``tomllib``, CSV through ``csv``, Touchstone through
:func:`oneport.reading.touchstone.read_one_port`.
"""

from __future__ import annotations

import csv
import hashlib
import io
import math
import tomllib
from collections.abc import Iterator
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from ...errors import FileFormatError, InputError
from ...reading.files import decode_text, read_user_bytes
from ...reading.touchstone import OnePort, read_one_port
from ...units import parse_quantity
from .describing import CurrentFunction, TunnelDiodeModel, polynomial_current, table_current

KINDS = ("drive-levels", "iv-curve")
FORMS = ("auto", "admittance", "impedance")
#: The amplitude keys a ``[[level]]`` may carry, each naming its unit.
LEVEL_QUANTITIES = ("incident_power_dbm", "peak_voltage_v", "peak_current_a")
MINIMUM_TABLE_ROWS = 4

_COMMON_KEYS = ("kind", "name", "form")
_DRIVE_KEYS = (*_COMMON_KEYS, "measurement_impedance_ohm", "level")
_IV_KEYS = (
    *_COMMON_KEYS,
    "bias_voltage_v",
    "amplitude_max_v",
    "amplitude_min_v",
    "reference_impedance_ohm",
    "frequency_start_hz",
    "frequency_stop_hz",
    "iv",
    "parasitics",
)
_TUNNEL_KEYS = (
    "peak_current_a",
    "peak_voltage_v",
    "saturation_current_a",
    "emission_voltage_v",
    "excess_current_a",
    "excess_exponent_per_v",
    "valley_voltage_v",
)
_PARASITIC_KINDS = {
    "series_resistance_ohm": "resistance",
    "series_inductance_h": "inductance",
    "junction_capacitance_f": "capacitance",
}


@dataclass(frozen=True)
class DriveLevelDevice:
    """A device measured at several drive levels: one Touchstone one-port per level.

    Attributes
    ----------
    quantity : str
        What ``levels`` are: ``"incident_power_dbm"`` (dBm at the device port),
        ``"peak_voltage_v"`` or ``"peak_current_a"`` (peak amplitudes at the port).
    levels : ndarray of float, shape (n,)
        Strictly increasing drive levels.
    ports : tuple of OnePort
        The files, one per level, all on one frequency grid and one reference impedance.
    measurement_impedance_ohm : float or None
        The impedance the device was really measured in, if its files were renormalised.
    """

    quantity: str
    levels: np.ndarray
    ports: tuple[OnePort, ...]
    source: str = "drive levels"
    sha256: str | None = None
    name: str = ""
    form: str = "auto"
    measurement_impedance_ohm: float | None = None


@dataclass(frozen=True)
class Parasitics:
    """Linear parasitics around the junction: Rs + sLs in series with (junction ∥ Cj).

    Attributes
    ----------
    series_resistance_ohm, series_inductance_h, junction_capacitance_f : float
        Rs (Ω), Ls (H) and Cj (F), all ≥ 0.
    """

    series_resistance_ohm: float = 0.0
    series_inductance_h: float = 0.0
    junction_capacitance_f: float = 0.0


@dataclass(frozen=True)
class IVDevice:
    """A quasi-static device: an I–V curve at a stiff bias, with lumped parasitics.

    Attributes
    ----------
    current : callable
        i(V), A, vectorised.
    curve_kind : str
        ``"table"``, ``"polynomial"`` or ``"tunnel-diode"``.
    bias_voltage_v, amplitude_min_v, amplitude_max_v : float
        Bias V0 and the range of junction peak amplitudes analysed, V.
    reference_impedance_ohm : float or None
        Z0 for reflection figures and plots; None: the load's own reference.
    frequency_start_hz, frequency_stop_hz : float or None
        Band to analyse inside the load's band; None: the load's band.
    """

    current: CurrentFunction = field(repr=False, compare=False)
    curve_kind: str
    bias_voltage_v: float
    amplitude_min_v: float
    amplitude_max_v: float
    parasitics: Parasitics = Parasitics()
    source: str = "I-V description"
    sha256: str | None = None
    name: str = ""
    form: str = "auto"
    reference_impedance_ohm: float | None = None
    frequency_start_hz: float | None = None
    frequency_stop_hz: float | None = None
    curve_summary: str = ""
    table_source: str | None = None
    table_sha256: str | None = None


DeviceDescription = DriveLevelDevice | IVDevice


class _Where:
    """Names the manifest in every message."""

    def __init__(self, path: Path) -> None:
        self.path = path

    def error(self, key: str, problem: str) -> InputError:
        return InputError(f"{self.path}: {key}: {problem}")


def read_device_description(path: str | Path) -> DeviceDescription:
    """Read and validate a device manifest (TOML).

    Parameters
    ----------
    path : str or Path
        The manifest; relative file names inside it are resolved against its folder.

    Returns
    -------
    DriveLevelDevice or IVDevice

    Raises
    ------
    InputError, FileFormatError
        One line naming the manifest, the key, the bad value and what is accepted.
    """
    manifest = Path(path)
    raw = read_user_bytes(manifest, "a TOML manifest")
    data = _parse_toml(str(manifest), decode_text(str(manifest), raw, "a TOML manifest"))
    where = _Where(manifest)
    kind = data.get("kind")
    if kind not in KINDS:
        raise where.error("kind", f"{kind!r} is not one of {', '.join(map(repr, KINDS))}")
    common = {
        "source": str(manifest),
        "sha256": hashlib.sha256(raw).hexdigest(),
        "name": _text(data, "name", where, default=""),
        "form": _choice(data, "form", FORMS, where, default="auto"),
    }
    if kind == "drive-levels":
        _allowed(data, _DRIVE_KEYS, "", where)
        return _drive_levels(data, manifest, where, common)
    _allowed(data, _IV_KEYS, "", where)
    return _iv_device(data, manifest, where, common)


def _parse_toml(name: str, text: str) -> dict[str, Any]:
    """The manifest's tables, or one line: invalid TOML, nested too deep, integers too large.

    TOML 1.0.0 (Integer): integers beyond 64 bits "must" be an error; ``tomllib`` keeps them,
    and one of 400 digits overflows every later conversion, so they are refused here.
    """
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as error:
        raise FileFormatError(name, f"is not valid TOML ({error})") from None
    except RecursionError:
        raise FileFormatError(
            name,
            "is nested too deeply to read (arrays or tables inside one another, hundreds of"
            " levels); a manifest needs a few levels",
        ) from None
    stack: list[tuple[str, Any]] = [("", data)]
    while stack:
        key, value = stack.pop()
        if isinstance(value, dict):
            stack += [(f"{key}.{k}" if key else k, v) for k, v in value.items()]
        elif isinstance(value, list):
            stack += [(f"{key}[{i}]", v) for i, v in enumerate(value)]
        elif isinstance(value, int) and not -(2**63) <= value < 2**63:
            digits = len(str(abs(value))) if abs(value) < 10**4000 else "thousands of"
            raise FileFormatError(
                name,
                f"{key}: an integer of {digits} digits; TOML integers fit in 64 bits (give"
                " physical values as numbers such as 1.5e-3)",
            )
    return data


def _drive_levels(
    data: dict[str, Any], manifest: Path, where: _Where, common: dict[str, Any]
) -> DriveLevelDevice:
    entries = data.get("level")
    if not isinstance(entries, list) or not all(isinstance(e, dict) for e in entries):
        raise where.error("level", "missing; give two or more [[level]] tables")
    if len(entries) < 2:
        raise where.error(
            "level",
            "only one drive level; the amplitude dependence needs two or more [[level]] tables",
        )
    quantity, values = _level_values(entries, where)
    ports = []
    for index, entry in enumerate(entries):
        file_name = _text(entry, "file", where, key=f"level[{index}].file")
        ports.append(_read_level(manifest, file_name, f"level[{index}].file", where))
    _same_grid(ports, where)
    impedance = _number(data, "measurement_impedance_ohm", where, positive=True, optional=True)
    return DriveLevelDevice(
        quantity=quantity,
        levels=np.array(values),
        ports=tuple(ports),
        measurement_impedance_ohm=impedance,
        **common,
    )


def _level_values(entries: list[dict[str, Any]], where: _Where) -> tuple[str, list[float]]:
    """The one amplitude quantity all levels share, and the strictly increasing values."""
    quantity = None
    values: list[float] = []
    for index, entry in enumerate(entries):
        key = f"level[{index}]"
        _allowed(entry, ("file", *LEVEL_QUANTITIES), key, where)
        present = [name for name in LEVEL_QUANTITIES if name in entry]
        if len(present) != 1:
            raise where.error(
                key,
                f"needs exactly one of {', '.join(LEVEL_QUANTITIES)}, found {present or 'none'}",
            )
        if quantity is None:
            quantity = present[0]
        elif present[0] != quantity:
            raise where.error(
                f"{key}.{present[0]}",
                f"level[0] uses {quantity}; every level must use the same amplitude quantity",
            )
        value = _number(
            entry,
            quantity,
            where,
            key=f"{key}.{quantity}",
            positive=quantity != "incident_power_dbm",
        )
        if values and value == values[-1]:
            raise where.error(f"{key}.{quantity}", f"{value:g} repeats the level before it")
        if values and value < values[-1]:
            raise where.error(
                f"{key}.{quantity}",
                f"{value:g} is below the level before it ({values[-1]:g}); list the levels in"
                " increasing order",
            )
        values.append(value)
    assert quantity is not None
    return quantity, values


def _read_level(manifest: Path, file_name: str, key: str, where: _Where) -> OnePort:
    path = _resolve(manifest, file_name)
    if not path.exists():
        raise where.error(key, f"no such file {file_name!r} (looked for {path})")
    try:
        return read_one_port(path)
    except FileFormatError as error:
        raise where.error(key, str(error)) from None


def _same_grid(ports: list[OnePort], where: _Where) -> None:
    first = ports[0]
    for index, port in enumerate(ports[1:], start=1):
        key = f"level[{index}].file"
        if port.reference_impedance_ohm != first.reference_impedance_ohm:
            raise where.error(
                key,
                f"reference {port.reference_impedance_ohm:g} ohm differs from level[0]'s"
                f" {first.reference_impedance_ohm:g} ohm; all levels must share one reference",
            )
        same = port.points == first.points and np.allclose(
            port.frequency_hz, first.frequency_hz, rtol=1e-9, atol=0.0
        )
        if not same:
            raise where.error(
                key,
                f"frequency grid ({port.points} points, {port.frequency_hz[0]:g} to"
                f" {port.frequency_hz[-1]:g} Hz) differs from level[0]'s ({first.points} points,"
                f" {first.frequency_hz[0]:g} to {first.frequency_hz[-1]:g} Hz); measure every"
                " level on one grid",
            )


def _iv_device(
    data: dict[str, Any], manifest: Path, where: _Where, common: dict[str, Any]
) -> IVDevice:
    bias = _number(data, "bias_voltage_v", where)
    iv = data.get("iv")
    if not isinstance(iv, dict):
        raise where.error(
            "iv",
            "missing; give an [iv] table with table, polynomial_coefficients"
            ' or model = "tunnel-diode"',
        )
    curve_kind, current, summary, table, table_range = _curve(iv, bias, manifest, where)
    largest = _number(data, "amplitude_max_v", where, positive=True, optional=True)
    if table_range is not None:
        room = min(bias - table_range[0], table_range[1] - bias)
        if not room > 0:
            raise where.error(
                "bias_voltage_v",
                f"{bias:g} V lies outside the table's {table_range[0]:g} to {table_range[1]:g} V",
            )
        if largest is None:
            largest = room
        elif largest > room * (1 + 1e-12):
            raise where.error(
                "amplitude_max_v",
                f"{largest:g} V takes the swing outside the table ({table_range[0]:g} to"
                f" {table_range[1]:g} V); at most {room:g} V at this bias",
            )
    if largest is None:
        raise where.error("amplitude_max_v", "missing; give the largest peak junction voltage, V")
    smallest = _number(data, "amplitude_min_v", where, positive=True, optional=True)
    smallest = largest / 1000.0 if smallest is None else smallest
    if not smallest < largest:
        raise where.error("amplitude_min_v", f"{smallest:g} V must be below amplitude_max_v")
    start = _quantity(data, "frequency_start_hz", "frequency", where)
    stop = _quantity(data, "frequency_stop_hz", "frequency", where)
    if start is not None and stop is not None and not start < stop:
        raise where.error("frequency_stop_hz", f"{stop:g} Hz must be above frequency_start_hz")
    device = IVDevice(
        current=current,
        curve_kind=curve_kind,
        curve_summary=summary,
        bias_voltage_v=bias,
        amplitude_min_v=smallest,
        amplitude_max_v=largest,
        parasitics=_parasitics(data, where),
        reference_impedance_ohm=_number(
            data, "reference_impedance_ohm", where, positive=True, optional=True
        ),
        frequency_start_hz=start,
        frequency_stop_hz=stop,
        table_source=None if table is None else table[0],
        table_sha256=None if table is None else table[1],
        **common,
    )
    _check_model(device, where)
    return device


def _curve(
    iv: dict[str, Any], bias: float, manifest: Path, where: _Where
) -> tuple[str, CurrentFunction, str, tuple[str, str] | None, tuple[float, float] | None]:
    """(kind, i(V), summary, (table path, sha256) or None, table voltage range or None)."""
    present = [key for key in ("table", "polynomial_coefficients", "model") if key in iv]
    if len(present) != 1:
        raise where.error(
            "iv", f"needs exactly one of table, polynomial_coefficients, model; found {present}"
        )
    if present[0] == "table":
        _allowed(iv, ("table",), "iv", where)
        name = _text(iv, "table", where, key="iv.table")
        path = _resolve(manifest, name)
        voltage, current, sha = read_iv_table(path, f"{where.path}: iv.table")
        summary = f"table {name} ({voltage.size} rows, {voltage[0]:g} to {voltage[-1]:g} V)"
        return (
            "table",
            table_current(voltage, current),
            summary,
            (str(path), sha),
            (
                float(voltage[0]),
                float(voltage[-1]),
            ),
        )
    if present[0] == "polynomial_coefficients":
        _allowed(iv, ("polynomial_coefficients",), "iv", where)
        coefficients = _number_list(iv, "polynomial_coefficients", where)
        summary = _polynomial_summary(coefficients)
        return "polynomial", polynomial_current(coefficients, bias), summary, None, None
    model = iv["model"]
    if model != "tunnel-diode":
        raise where.error("iv.model", f"{model!r} is not a known model; accepted: 'tunnel-diode'")
    _allowed(iv, ("model", *_TUNNEL_KEYS), "iv", where)
    values = {
        key: _number(iv, key, where, key=f"iv.{key}", positive=index < 4, optional=index >= 4)
        or 0.0
        for index, key in enumerate(_TUNNEL_KEYS)
    }
    tunnel = TunnelDiodeModel(**values)
    from ...units import format_engineering

    summary = (
        f"tunnel-diode model: Ip = {format_engineering(tunnel.peak_current_a, 'A')},"
        f" Vp = {format_engineering(tunnel.peak_voltage_v, 'V')},"
        f" Is = {format_engineering(tunnel.saturation_current_a, 'A')},"
        f" Ve = {format_engineering(tunnel.emission_voltage_v, 'V')}"
    )
    if tunnel.excess_current_a:
        summary += (
            f", Ix = {format_engineering(tunnel.excess_current_a, 'A')},"
            f" K = {tunnel.excess_exponent_per_v:.4g} /V,"
            f" Vv = {format_engineering(tunnel.valley_voltage_v, 'V')}"
        )
    return "tunnel-diode", tunnel.current, summary, None, None


#: Junction peak amplitudes an I–V description may span, V.
AMPLITUDE_RANGE_V = (1e-12, 1e3)
#: Largest current magnitude an I–V curve may reach over its swing, A.
LARGEST_CURRENT_A = 1e6
#: Parasitic values: 0, or a magnitude in these bounds (those of docs/netlist.md's R, L and C).
PARASITIC_BOUNDS = {
    "series_resistance_ohm": (1e-12, 1e15),
    "series_inductance_h": (1e-18, 1e3),
    "junction_capacitance_f": (1e-21, 1e3),
}


def _check_model(device: IVDevice, where: _Where) -> None:
    """Refuse amplitudes and curves no device has, before any arithmetic overflows on them:
    amplitudes outside AMPLITUDE_RANGE_V, currents beyond LARGEST_CURRENT_A (or not finite)
    anywhere in the swing V0 ± amplitude_max_v."""
    low, high = AMPLITUDE_RANGE_V
    for key, value in (
        ("amplitude_min_v", device.amplitude_min_v),
        ("amplitude_max_v", device.amplitude_max_v),
    ):
        if not low <= value <= high:
            raise where.error(key, f"{value:g} V is not accepted; give {low:g} V to {high:g} V")
    swing = device.bias_voltage_v + device.amplitude_max_v * np.linspace(-1.0, 1.0, 257)
    with np.errstate(all="ignore"):
        current = np.asarray(device.current(swing), dtype=float)
    worst = float(np.max(np.abs(current))) if np.all(np.isfinite(current)) else math.inf
    if not (math.isfinite(float(np.max(np.abs(swing)))) and worst <= LARGEST_CURRENT_A):
        raise where.error(
            "iv",
            f"the curve reaches {worst:g} A within the swing (bias_voltage_v ± amplitude_max_v);"
            f" a device's current stays within ±{LARGEST_CURRENT_A:g} A: check the values",
        )


def _polynomial_summary(coefficients: tuple[float, ...]) -> str:
    """``i = 0.002 v - v³ + 8 v⁵`` for the manifest's coefficients, v = V - V0 in V, i in A."""
    powers = "⁰¹²³⁴⁵⁶⁷⁸⁹"
    terms = []
    for power, coefficient in enumerate(coefficients):
        if coefficient == 0:
            continue
        exponent = "".join(powers[int(d)] for d in str(power)) if power > 1 else ""
        variable = "" if power == 0 else f"v{exponent}"
        size = abs(coefficient)
        number = "" if (size == 1 and power) else f"{size:.4g}" + (" " if power else "")
        sign = "-" if coefficient < 0 else "+"
        terms.append((sign, f"{number}{variable}"))
    if not terms:
        return "polynomial about the bias: i = 0 A"
    text = ("-" if terms[0][0] == "-" else "") + terms[0][1]
    text += "".join(f" {sign} {term}" for sign, term in terms[1:])
    return f"polynomial about the bias: i = {text} (i in A, v = V - V0 in V)"


def read_iv_table(path: Path, label: str) -> tuple[np.ndarray, np.ndarray, str]:
    """Read a CSV I–V table: two columns, voltage (V) and current (A); one header row allowed.

    Lines starting with ``#`` are comments. Voltages must increase strictly; at least
    ``MINIMUM_TABLE_ROWS`` rows; every value finite.

    Returns
    -------
    voltage_v, current_a : ndarray
    sha256 : str
    """
    try:
        raw = read_user_bytes(path, "a CSV table of voltage and current")
        text = decode_text(str(path), raw, "a CSV table of voltage and current")
    except FileFormatError as error:
        raise InputError(f"{label}: {error}") from None
    rows: list[tuple[float, float]] = []
    for number, row in _csv_rows(path, text):
        if not row or not "".join(row).strip() or row[0].lstrip().startswith("#"):
            continue
        if len(row) != 2:
            raise FileFormatError(
                str(path), f"{len(row)} columns; two are accepted (voltage_v, current_a)", number
            )
        try:
            pair = (float(row[0]), float(row[1]))
        except ValueError:
            if not rows and number == _first_content_line(text):
                continue  # the header row
            raise FileFormatError(
                str(path), f"cannot read {row!r} as two numbers", number
            ) from None
        if not all(math.isfinite(value) for value in pair):
            raise FileFormatError(str(path), f"{row!r} is not finite", number)
        if rows and pair[0] <= rows[-1][0]:
            raise FileFormatError(
                str(path),
                f"voltage {pair[0]:g} does not increase; sort the table by voltage",
                number,
            )
        rows.append(pair)
    if len(rows) < MINIMUM_TABLE_ROWS:
        raise FileFormatError(
            str(path), f"{len(rows)} data rows; at least {MINIMUM_TABLE_ROWS} are needed"
        )
    table = np.array(rows)
    return table[:, 0], table[:, 1], hashlib.sha256(raw).hexdigest()


def _csv_rows(path: Path, text: str) -> Iterator[tuple[int, list[str]]]:
    """The CSV rows with their line numbers; ``csv``'s own refusals (a field longer than its
    limit of 131,072 characters, a NUL) become one line naming the line."""
    reader = csv.reader(io.StringIO(text))
    while True:
        try:
            row = next(reader)
        except StopIteration:
            return
        except csv.Error as error:
            raise FileFormatError(
                str(path), f"is not a readable CSV table ({error})", reader.line_num
            ) from None
        yield reader.line_num, row


def _first_content_line(text: str) -> int:
    for number, line in enumerate(text.splitlines(), start=1):
        if line.strip() and not line.lstrip().startswith("#"):
            return number
    return 0


def _parasitics(data: dict[str, Any], where: _Where) -> Parasitics:
    table = data.get("parasitics", {})
    if not isinstance(table, dict):
        raise where.error("parasitics", "must be a table ([parasitics])")
    _allowed(table, tuple(_PARASITIC_KINDS), "parasitics", where)
    values = {}
    for key, kind in _PARASITIC_KINDS.items():
        value = _quantity(table, key, kind, where, prefix="parasitics.")
        if value is not None and value < 0:
            raise where.error(f"parasitics.{key}", f"{value:g} is negative; give a value >= 0")
        low, high = PARASITIC_BOUNDS[key]
        if value and not low <= value <= high:
            raise where.error(
                f"parasitics.{key}", f"{value:g} is not accepted; give 0 or {low:g} to {high:g}"
            )
        values[key] = value or 0.0
    return Parasitics(**values)


def _resolve(manifest: Path, name: str) -> Path:
    path = Path(name)
    return path if path.is_absolute() else manifest.parent / path


def _allowed(table: dict[str, Any], keys: tuple[str, ...], prefix: str, where: _Where) -> None:
    for key in table:
        if key not in keys:
            full = f"{prefix}.{key}" if prefix else key
            raise where.error(full, f"unknown key; accepted here: {', '.join(keys)}")


def _text(
    table: dict[str, Any],
    name: str,
    where: _Where,
    *,
    key: str | None = None,
    default: str | None = None,
) -> str:
    value = table.get(name, default)
    if not isinstance(value, str) or (default is None and not value):
        raise where.error(key or name, f"{value!r} is not a non-empty string")
    return value


def _choice(
    table: dict[str, Any], name: str, choices: tuple[str, ...], where: _Where, default: str
) -> str:
    value = table.get(name, default)
    if value not in choices:
        raise where.error(name, f"{value!r} is not one of {', '.join(map(repr, choices))}")
    return str(value)


def _number(
    table: dict[str, Any],
    name: str,
    where: _Where,
    *,
    key: str | None = None,
    positive: bool = False,
    optional: bool = False,
) -> Any:
    """A finite number (int or float, not bool); None when optional and absent."""
    label = key or name
    if name not in table:
        if optional:
            return None
        raise where.error(label, "missing; give a number")
    value = table[name]
    if isinstance(value, bool) or not isinstance(value, int | float) or not math.isfinite(value):
        raise where.error(label, f"{value!r} is not a finite number")
    if positive and not value > 0:
        raise where.error(label, f"{value!r} must be positive")
    return float(value)


def _quantity(
    table: dict[str, Any], name: str, kind: str, where: _Where, prefix: str = ""
) -> float | None:
    """A number in SI units, or a string with an SI prefix and unit (``"0.4nH"``)."""
    if name not in table:
        return None
    value = table[name]
    if isinstance(value, str):
        return parse_quantity(value, kind, option=f"{where.path}: {prefix}{name}")
    result: float = _number(table, name, where, key=prefix + name)
    return result


def _number_list(table: dict[str, Any], name: str, where: _Where) -> tuple[float, ...]:
    values = table[name]
    if not isinstance(values, list) or len(values) < 2:
        raise where.error(f"iv.{name}", "give a list of two or more numbers [c0, c1, ...]")
    return tuple(
        _number({"value": item}, "value", where, key=f"iv.{name}[{index}]")
        for index, item in enumerate(values)
    )
