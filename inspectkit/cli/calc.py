"""`inspectkit calc rod|wenner|traverse|parallel|l1|separation`: the earthing calculators.

Thin: each command hands its options, as typed, to `inspectkit.calculators` and
prints the answer with its source; a refused input exits 2 naming the option.
Nothing is read from or written to a database.
"""

from __future__ import annotations

import functools
from collections.abc import Callable
from typing import Annotated

import typer

from inspectkit import calculators
from inspectkit.calculators import Answer, CalcInputError
from inspectkit.cli.common import JsonOption, emit_json, fail

calc_app = typer.Typer(
    help="Earthing calculators: rod resistance, Wenner ρ, probe placement and plateau, "
    "electrodes in parallel, minimum electrode length l1, separation distance.",
    no_args_is_help=True,
)

# Options spelt alike wherever they are taken (`electrode size` takes --orientation too).
LevelOption = Annotated[str, typer.Option("--level", help="Protection level I, II, III or IV.")]
OrientationOption = Annotated[
    str, typer.Option("--orientation", help="vertical, horizontal or inclined.")
]
#: A command's declaration: its options as parameters, no body.
Options = Callable[..., None]


def _calculator(calculate: Callable[..., Answer]) -> Callable[[Options], Options]:
    """`calc NAME` for calculator `calculate`, from a function that only declares its options.

    The options carry the calculator's parameter names, so every command runs the
    same way: the inputs go over by name, a refusal exits 2 naming its option, and
    the answer prints as lines with its source, or as JSON with `--json`.
    """

    def command(options: Options) -> Options:
        @functools.wraps(options)
        def run(json_out: bool = False, **inputs: str) -> None:
            try:
                answer = calculate(**inputs)
            except CalcInputError as exc:
                fail(f"--{exc.field.replace('_', '-')}: {exc}")
            if json_out:
                emit_json(answer.to_json())
                return
            for line in answer.lines:
                typer.echo(line)
            typer.echo(f"source: {answer.source}")

        return calc_app.command(calculate.__name__)(run)

    return command


@_calculator(calculators.rod)
def rod(
    resistivity: Annotated[str, typer.Option("--resistivity", help="Soil ρ, e.g. 100 Ω·m.")],
    length: Annotated[str, typer.Option("--length", help="Driven length, e.g. 3 m or 10 ft.")],
    diameter: Annotated[
        str, typer.Option("--diameter", help="Rod diameter, e.g. 16 mm or 5/8 in.")
    ],
    json_out: JsonOption = False,
) -> None:
    """Earth resistance of one driven rod in uniform soil (Dwight)."""


@_calculator(calculators.wenner)
def wenner(
    spacing: Annotated[str, typer.Option("--spacing", help="Probe spacing a, e.g. 3 m.")],
    resistance: Annotated[str, typer.Option("--resistance", help="Reading R, e.g. 10 Ω.")],
    depth: Annotated[
        str, typer.Option("--depth", help="Probe depth b, e.g. 0.2 m (default: shallow).")
    ] = "",
    json_out: JsonOption = False,
) -> None:
    """Soil resistivity from a Wenner four-probe reading, full and simple forms."""


@_calculator(calculators.traverse)
def traverse(
    current_probe: Annotated[
        str, typer.Option("--current-probe", help="E–C distance, e.g. 50 m.")
    ],
    points: Annotated[
        str,
        typer.Option(
            "--points",
            help="Readings along the traverse, position=reading: '52%=10.1; 61.8%=10.3; "
            "72%=10.6' (or positions in m).",
        ),
    ] = "",
    electrode_size: Annotated[
        str,
        typer.Option("--electrode-size", help="Largest dimension of the electrode, e.g. 3 m."),
    ] = "",
    tolerance: Annotated[
        str, typer.Option("--tolerance", help="Plateau tolerance, e.g. 5 %.")
    ] = "5 %",
    json_out: JsonOption = False,
) -> None:
    """Fall-of-potential: where the probes go; with --points, the 61.8 % value and plateau."""


@_calculator(calculators.parallel)
def parallel(
    resistances: Annotated[
        str, typer.Option("--resistances", help="Each electrode's Ω, e.g. '12; 15; 20'.")
    ],
    spacing: Annotated[
        str, typer.Option("--spacing", help="Rods in line: distance between them, e.g. 6 m.")
    ] = "",
    length: Annotated[str, typer.Option("--length", help="Rods in line: rod length.")] = "",
    diameter: Annotated[
        str, typer.Option("--diameter", help="Rods in line: rod diameter.")
    ] = "16 mm",
    json_out: JsonOption = False,
) -> None:
    """Electrodes bonded together; with --spacing and --length, equal rods in a line."""


@_calculator(calculators.l1)
def l1(
    level: LevelOption,
    resistivity: Annotated[str, typer.Option("--resistivity", help="Soil ρ, e.g. 1000 Ω·m.")],
    orientation: OrientationOption = "",
    json_out: JsonOption = False,
) -> None:
    """Minimum length of each earth electrode (IEC 62305-3 Figure 2 and clause 5.4.2)."""


@_calculator(calculators.separation)
def separation(
    level: LevelOption,
    down_conductors: Annotated[
        str, typer.Option("--down-conductors", help="Number of down conductors, e.g. 4.")
    ],
    length: Annotated[
        str, typer.Option("--length", help="Length to the nearest bonding point, e.g. 10 m.")
    ],
    material: Annotated[
        str, typer.Option("--material", help="air, or solid (brick, concrete, wood).")
    ] = "air",
    edition: Annotated[
        str, typer.Option("--edition", help="IEC 62305-3 edition: 2010 or 2006.")
    ] = "2010",
    json_out: JsonOption = False,
) -> None:
    """Separation distance between LPS conductors and other metal (IEC 62305-3 clause 6.3)."""


def register(app: typer.Typer) -> None:
    app.add_typer(calc_app, name="calc")
