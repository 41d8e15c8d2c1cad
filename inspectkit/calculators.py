"""The inspector's earthing calculators: inputs as typed, a plain answer with its source.

`inspectkit calc …` and the calculator screen call these same functions, so the
numbers on the roof and in a script agree. Each takes text as typed (units
through `units.py`), refuses an input outside its formula's domain with a
message naming the input and the range, and returns an `Answer`: lines a person
reads, the formula's source, and the figures for `--json`.
"""

from __future__ import annotations

import re
from collections.abc import Callable
from dataclasses import dataclass, field
from datetime import date
from typing import Any, TypeVar

from inspectkit.earthing_input import parse_traverse, traverse_as_typed
from inspectkit.earthing_values import read_traverse
from inspectkit.engine.electrode_resistance import (
    RODS_IN_LINE_LAMBDA,
    parallel_resistance,
    rod_resistance,
    rods_in_line_spacing_factor,
)
from inspectkit.engine.electrodes import judge_traverse
from inspectkit.engine.fall_of_potential import (
    PLATEAU_FRACTIONS,
    current_probe_min_distance,
    potential_probe_distance,
)
from inspectkit.engine.formula_inputs import EarthingError
from inspectkit.engine.history import in_service
from inspectkit.engine.iec62305 import (
    SEPARATION_KI,
    SEPARATION_KM,
    min_electrode_length_l1,
    separation_distance_m,
    separation_kc,
)
from inspectkit.engine.soil import design_resistivity
from inspectkit.engine.wenner import wenner_resistivity, wenner_resistivity_simple
from inspectkit.model import (
    Component,
    ComponentKind,
    ElectrodeOrientation,
    ProtectionLevel,
    Quantity,
    Reading,
    SiteRecords,
)
from inspectkit.units import UnitError, parse, parse_fraction, parse_length

T = TypeVar("T")

#: The calculators by name, in the order they are offered.
CALCULATORS = ("rod", "wenner", "traverse", "parallel", "l1", "separation")


class CalcInputError(ValueError):
    """An input that cannot be used; `field` names it, the message says the range or the fix."""

    def __init__(self, field_name: str, message: str) -> None:
        super().__init__(message)
        self.field = field_name


@dataclass(frozen=True)
class Answer:
    """A calculator's answer.

    Attributes:
        calculator: Which one (`rod`, `wenner`, …).
        lines: The answer in sentences, most important first.
        source: Where the formula comes from, and how sure we are of it.
        inputs: The inputs as read, in SI units.
        results: The figures worked out, in SI units.
    """

    calculator: str
    lines: tuple[str, ...]
    source: str
    inputs: dict[str, Any] = field(default_factory=dict)
    results: dict[str, Any] = field(default_factory=dict)

    def to_json(self) -> dict[str, Any]:
        return {
            "calculator": self.calculator,
            "inputs": self.inputs,
            "results": self.results,
            "answer": list(self.lines),
            "source": self.source,
        }


def _read(name: str, read: Callable[[str], T], text: str) -> T:
    """One input read, a refusal blamed on it."""
    try:
        return read(text)
    except UnitError as exc:
        raise CalcInputError(name, str(exc).removeprefix(f"{name}: ")) from None


def _length(name: str, text: str) -> float:
    return _read(name, lambda t: parse_length(t, name), text)


def _quantity(name: str, text: str, quantity: Quantity) -> float:
    measured = _read(name, lambda t: parse(t, quantity), text)
    if measured.over_range or not measured.value:
        raise CalcInputError(name, f"{text!r} must be a value above zero, not over-range")
    return measured.value


def _level(text: str) -> ProtectionLevel:
    key = text.strip().upper()
    key = {"1": "I", "2": "II", "3": "III", "4": "IV"}.get(key, key)
    try:
        return ProtectionLevel(key)
    except ValueError:
        raise CalcInputError(
            "level", f"{text!r} is not a protection level; use I, II, III or IV"
        ) from None


def _formula(names: dict[str, str], call: Callable[[], T]) -> T:
    """Run a formula; its refusal is put in the inputs' names (`length_m` → `length`)."""
    try:
        return call()
    except EarthingError as exc:
        message = str(exc)
        mentioned = [(message.find(n), n) for n in names if n in message]
        blamed = min(mentioned)[1] if mentioned else next(iter(names))
        for argument, name in names.items():
            message = re.sub(rf"\b{argument}\b", name, message)
        raise CalcInputError(names[blamed], message) from None


def _ohm(value: float) -> str:
    return f"{value:.3g} Ω"


# ---------------------------------------------------------------- the calculators


def rod(resistivity: str, length: str, diameter: str) -> Answer:
    """A driven rod's earth resistance in uniform soil (Dwight)."""
    rho = _quantity("resistivity", resistivity, Quantity.SOIL_RESISTIVITY)
    length_m, diameter_m = _length("length", length), _length("diameter", diameter)
    names = {"resistivity_ohm_m": "resistivity", "length_m": "length", "diameter_m": "diameter"}
    ohm = _formula(names, lambda: rod_resistance(rho, length_m, diameter_m))
    return Answer(
        "rod",
        (
            f"R = {_ohm(ohm)} for a {length_m:g} m rod of {diameter_m * 1000:g} mm "
            f"in {rho:g} Ω·m soil",
            "R = ρ/(2πL)·(ln(8L/d) − 1); uniform soil assumed: an estimate to compare a "
            "measurement with",
        ),
        "Dwight 1936; IEEE Std 142 (as quoted)",
        {"resistivity_ohm_m": rho, "length_m": length_m, "diameter_m": diameter_m},
        {"resistance_ohm": ohm},
    )


def wenner(spacing: str, resistance: str, depth: str = "") -> Answer:
    """Apparent soil resistivity from a Wenner reading, both forms."""
    a = _length("spacing", spacing)
    r = _quantity("resistance", resistance, Quantity.EARTH_ISOLATED)
    b = _length("depth", depth) if depth.strip() else 0.0
    names = {"spacing_m": "spacing", "resistance_ohm": "resistance", "depth_m": "depth"}
    full = _formula(names, lambda: wenner_resistivity(a, r, b))
    simple = _formula(names, lambda: wenner_resistivity_simple(a, r))
    lines = [f"ρ = {full:.4g} Ω·m at a = {a:g} m"]
    if b:
        lines.append(
            f"full form with probes {b:g} m deep: {full:.4g} Ω·m; simple 2π·a·R: "
            f"{simple:.4g} Ω·m ({100 * (full / simple - 1):+.1f} %)"
        )
        if a <= 20 * b:
            lines.append(f"a is not above 20·b ({20 * b:g} m): use the full form")
    else:
        lines.append("ρ = 2π·a·R (probes shallow against the spacing)")
    return Answer(
        "wenner",
        tuple(lines),
        "IEEE Std 81, Wenner arrangement (simple form as quoted; full form from memory)",
        {"spacing_m": a, "resistance_ohm": r, "depth_m": b},
        {"resistivity_ohm_m": full, "resistivity_simple_ohm_m": simple},
    )


def traverse(
    current_probe: str, points: str = "", electrode_size: str = "", tolerance: str = "5 %"
) -> Answer:
    """Where to put the probes, and with readings, the value at 61.8 % and the plateau check."""
    c = _length("current_probe", current_probe)
    size = _length("electrode_size", electrode_size) if electrode_size.strip() else None
    tol = _read("tolerance", lambda t: parse_fraction(t, "tolerance"), tolerance)
    at = _formula({"current_probe_distance_m": "current_probe"},
                  lambda: potential_probe_distance(c))  # fmt: skip
    low, high = (f * c for f in PLATEAU_FRACTIONS)
    lines = [f"potential probe at {at:.3g} m (61.8 % of {c:g} m); checks at {low:.3g} m "
             f"(52 %) and {high:.3g} m (72 %)"]  # fmt: skip
    results: dict[str, Any] = {"potential_probe_m": at, "check_positions_m": [low, high]}
    if size is not None:
        least = current_probe_min_distance(size)
        results["current_probe_min_m"] = least
        verdict = "far enough" if c >= least else "too close: move it out"
        lines.append(f"current probe at least {least:g} m (5 × {size:g} m): {verdict}")
    if points.strip():
        series = _read("points", lambda t: parse_traverse(t, current_probe), points)
        judged = _read_traverse(series, tol, size)
        lines.insert(0, f"R = {_ohm(judged.value_ohm)} at 61.8 %: {judged.message}")
        results.update(
            resistance_ohm=judged.value_ohm, plateau=judged.valid,
            spread=judged.plateau.spread, move_to_m=judged.move_to_m,
        )  # fmt: skip
    return Answer(
        "traverse",
        tuple(lines),
        "IEEE Std 81, fall-of-potential 61.8 % rule (as quoted); 52 %/72 % within ±5 % and "
        "C ≥ 5 × the electrode (common practice)",
        {"current_probe_m": c, "electrode_size_m": size, "tolerance": tol},
        results,
    )


def _read_traverse(series: Any, tolerance: float, size: float | None) -> Any:
    try:
        return judge_traverse(series, tolerance, size)
    except EarthingError as exc:
        raise CalcInputError("points", str(exc)) from None


def parallel(
    resistances: str, spacing: str = "", length: str = "", diameter: str = "16 mm"
) -> Answer:
    """Electrodes bonded together: the ideal parallel value, and with rods in line, coupled."""
    texts = [t for t in re.split(r"[;\s]+", resistances.strip()) if t]
    if not texts:
        raise CalcInputError("resistances", "nothing typed; type each electrode's Ω, e.g. 12; 15")
    values = [_quantity("resistances", t, Quantity.EARTH_ISOLATED) for t in texts]
    ideal = parallel_resistance(values)
    lines = [f"R = {_ohm(ideal)} for {len(values)} electrode(s) far apart: 1/Σ(1/Rᵢ)"]
    results: dict[str, Any] = {"ideal_ohm": ideal}
    source = "parallel combination (circuit law)"
    if spacing.strip() or length.strip():
        s, length_m = _length("spacing", spacing), _length("length", length)
        d = _length("diameter", diameter)
        most = max(RODS_IN_LINE_LAMBDA)
        if len(values) > most:
            raise CalcInputError(
                "resistances", f"rods in line: 1 to {most} rods; the method's table goes no further"
            )
        names = {"spacing_m": "spacing", "length_m": "length", "diameter_m": "diameter"}
        factor = _formula(
            names, lambda: rods_in_line_spacing_factor(len(values), s, length_m, d)
        )
        coupled = parallel_resistance(values, factor)
        lines.append(
            f"in line {s:g} m apart ({length_m:g} m rods): R ≈ {_ohm(coupled)} "
            f"(spacing factor {factor:.3f})"
        )
        results.update(spacing_factor=factor, coupled_ohm=coupled)
        source += "; rods in line, BS 7430 method (λ table from memory)"
    return Answer("parallel", tuple(lines), source, {"resistances_ohm": values}, results)


def l1(level: str, resistivity: str, orientation: str = "") -> Answer:
    """IEC 62305-3's minimum electrode length for a level and a soil resistivity."""
    lvl = _level(level)
    rho = _quantity("resistivity", resistivity, Quantity.SOIL_RESISTIVITY)
    names = {"resistivity_ohm_m": "resistivity", "level": "level"}
    length = _formula(names, lambda: min_electrode_length_l1(lvl, rho))
    lines = [
        f"l1 = {length:.3g} m for level {lvl.value} in {rho:g} Ω·m soil",
        f"type A: horizontal ≥ {length:.3g} m, vertical or inclined ≥ {0.5 * length:.3g} m "
        f"(at least two electrodes); type B: ring mean radius ≥ {length:.3g} m",
    ]
    if orientation.strip():
        lie = _read("orientation", lambda t: ElectrodeOrientation(t.strip().lower()), orientation)
        need = length if lie is ElectrodeOrientation.HORIZONTAL else 0.5 * length
        lines.insert(1, f"{lie.value}: at least {need:.3g} m")
    return Answer(
        "l1",
        tuple(lines),
        "IEC 62305-3 Figure 2 (key points from memory) and clause 5.4.2 (as quoted); "
        "waived below 10 Ω",
        {"level": lvl.value, "resistivity_ohm_m": rho},
        {"l1_m": length, "vertical_min_m": 0.5 * length, "horizontal_min_m": length},
    )


def separation(
    level: str, down_conductors: str, length: str, material: str = "air", edition: str = "2010"
) -> Answer:
    """Least distance between an LPS conductor and other metal (s = ki·kc/km·l)."""
    lvl = _level(level)
    if not down_conductors.strip().isdigit():
        raise CalcInputError(
            "down_conductors", f"{down_conductors!r} must be a whole number, 1 or more"
        )
    n = int(down_conductors)
    length_m = _length("length", length)
    names = {"down_conductors": "down_conductors", "material": "material", "edition": "edition",
             "length_m": "length"}  # fmt: skip
    s = _formula(
        names,
        lambda: separation_distance_m(
            lvl, n, length_m, material.strip().lower(), edition.strip()  # type: ignore[arg-type]
        ),
    )
    kc = separation_kc(n, edition.strip())  # type: ignore[arg-type]
    ki = SEPARATION_KI[lvl]
    km = SEPARATION_KM[material.strip().lower()]
    return Answer(
        "separation",
        (
            f"s = {s:.3g} m for level {lvl.value}, {n} down conductor(s), {length_m:g} m "
            f"to the nearest bonding point, through {material.strip().lower()}",
            f"s = ki·(kc/km)·l = {ki:g} × ({kc:g} / {km:g}) × {length_m:g}",
        ),
        f"IEC 62305-3:{edition.strip()} clause 6.3 (as quoted)",
        {"level": lvl.value, "down_conductors": n, "length_m": length_m,
         "material": material.strip().lower(), "edition": edition.strip()},
        {"separation_m": s, "ki": ki, "kc": kc, "km": km},
    )  # fmt: skip


# ---------------------------------------------------------------- inputs from the records

#: Each calculator's inputs, as its function names them, with a label and an example.
FIELDS: dict[str, tuple[tuple[str, str, str], ...]] = {
    "rod": (("resistivity", "Soil ρ", "100 Ω·m"), ("length", "Length", "3 m"),
            ("diameter", "Diameter", "16 mm")),
    "wenner": (("spacing", "Spacing a", "3 m"), ("resistance", "Reading R", "10 Ω"),
               ("depth", "Probe depth b", "0.2 m (blank: shallow)")),
    "traverse": (("current_probe", "E–C distance", "50 m"),
                 ("points", "Readings", "52%=10.1; 61.8%=10.3; 72%=10.6"),
                 ("electrode_size", "Electrode size", "3 m"), ("tolerance", "Tolerance", "5 %")),
    "parallel": (("resistances", "Resistances", "12; 15; 20"),
                 ("spacing", "Rods in line: spacing", "6 m"), ("length", "Rod length", "3 m"),
                 ("diameter", "Rod diameter", "16 mm")),
    "l1": (("level", "Level", "I to IV"), ("resistivity", "Soil ρ", "1000 Ω·m"),
           ("orientation", "Orientation", "vertical, horizontal, inclined")),
    "separation": (("level", "Level", "I to IV"), ("down_conductors", "Down conductors", "4"),
                   ("length", "Length to bonding", "10 m"),
                   ("material", "Material", "air or solid"), ("edition", "Edition", "2010")),
}  # fmt: skip


def work_out(name: str, inputs: dict[str, str]) -> Answer:
    """Run calculator `name` on inputs by field name; missing ones are blank.

    Raises:
        CalcInputError: an input is refused, or a required one is blank.
    """
    call = globals()[name]
    known = {field for field, _, _ in FIELDS[name]}
    given = {k: v for k, v in inputs.items() if k in known and v.strip()}
    required = [f for f, _, _ in FIELDS[name]][: _required_count(name)]
    for field_name in required:
        if field_name not in given:
            raise CalcInputError(field_name, "nothing typed; this input is needed")
    return call(**given)  # type: ignore[no-any-return]


def _required_count(name: str) -> int:
    """How many of a calculator's first inputs have no default."""
    return {"rod": 3, "wenner": 2, "traverse": 1, "parallel": 1, "l1": 2, "separation": 3}[name]


def prefill(
    records: SiteRecords, component: Component | None, today: date
) -> dict[str, dict[str, str]]:
    """Inputs each calculator starts with, from the site and the component being inspected.

    The soil ρ is the site's design value for the component's length, the rod's
    size its recorded one, the traverse its latest one (or C five times the rod's
    length, common practice), the resistances the electrodes' latest readings.
    """
    site = records.site
    length = component.length_m if component else None
    rho = design_resistivity(records.surveys, records.readings, length)
    rho_text = f"{rho.rho_ohm_m:.4g} Ω·m" if rho else ""
    rod_length = f"{length:g} m" if length else ""
    diameter = f"{component.diameter_m * 1000:g} mm" if component and component.diameter_m else ""
    in_use = [c for c in records.components if in_service(c, today)]
    latest: dict[tuple[str, Quantity], Reading] = {}
    for reading in sorted(records.readings, key=lambda r: r.taken_at):
        latest[(reading.component_id, reading.quantity)] = reading
    electrodes = [c for c in in_use if c.kind is ComponentKind.EARTH_ELECTRODE]
    ohms = [latest[(c.id, Quantity.EARTH_ISOLATED)] for c in electrodes
            if (c.id, Quantity.EARTH_ISOLATED) in latest]  # fmt: skip
    traverse_inputs = {"electrode_size": rod_length, "tolerance": "5 %", "current_probe": "",
                       "points": ""}  # fmt: skip
    if length:
        traverse_inputs["current_probe"] = f"{current_probe_min_distance(length):g} m"
    own = latest.get((component.id, Quantity.EARTH_ISOLATED)) if component else None
    if own is not None and own.traverse:
        series = read_traverse(own.traverse)
        traverse_inputs.update(
            current_probe=f"{series.current_probe_m:g} m", points=traverse_as_typed(series)
        )
    oriented = component.electrode_orientation if component else None
    lie = oriented.value if oriented else ""
    downs = sum(1 for c in in_use if c.kind is ComponentKind.DOWN_CONDUCTOR)
    survey = max(records.surveys, key=lambda s: (s.date, s.created_at), default=None)
    depth = f"{survey.probe_depth_m:g} m" if survey and survey.probe_depth_m else ""
    return {
        "rod": {"resistivity": rho_text, "length": rod_length, "diameter": diameter},
        "wenner": {"spacing": "", "resistance": "", "depth": depth},
        "traverse": traverse_inputs,
        "parallel": {
            "resistances": "; ".join(f"{r.value:g}" for r in ohms if r.value and not r.over_range),
            "spacing": "", "length": rod_length, "diameter": diameter or "16 mm",
        },
        "l1": {"level": site.protection_level.value, "resistivity": rho_text, "orientation": lie},
        "separation": {
            "level": site.protection_level.value, "down_conductors": str(downs) if downs else "",
            "length": "", "material": "air",
            "edition": "2006" if "2006" in site.design_standard else "2010",
        },
    }  # fmt: skip
