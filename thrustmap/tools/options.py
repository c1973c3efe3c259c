"""Shared options: one name, one meaning, in every tool, on the command line and in pipelines.

Two kinds. *Run options* (``layer``, ``out``, ``overwrite``, ``quiet``,
``verbose``) belong to the command line and no tool may declare a parameter with
those names. *Tool options* (``crs``, ``azimuth_ref``, ``declination``, ``date``)
are parameters a tool may declare; a tool that does must use the declaration
below (the constants ``CRS``, ``AZIMUTH_REF``, ``DECLINATION``, ``DATE``, with
its own default if it needs one), so that ``--azimuth-ref magnetic`` means the
same thing whichever tool receives it. The command line always offers ``--crs``
(the working CRS inputs are reprojected to) and offers the other tool options
only to the tools that declare them. The pipeline fills the same parameters from
the project file (see :mod:`thrustmap.pipeline`).
"""

from __future__ import annotations

from dataclasses import dataclass

from thrustmap.tools.declare import Param, Tool

__all__ = [
    "CommonOption",
    "COMMON_OPTIONS",
    "CRS",
    "AZIMUTH_REF",
    "DECLINATION",
    "DATE",
    "common_option",
    "check_common_params",
]

CRS = Param(
    "crs",
    "str",
    help="Working CRS (projected, metres), e.g. EPSG:32633; spatial inputs are reprojected "
    "to it, inputs without a CRS are taken to be in it, and outputs are in it.",
)
AZIMUTH_REF = Param(
    "azimuth_ref",
    "choice",
    default="true",
    help="North reference of the azimuths in the input: true, grid (of the working CRS) "
    "or magnetic (corrected with the declination).",
    choices=("true", "grid", "magnetic"),
)
DECLINATION = Param(
    "declination",
    "float",
    help="Magnetic declination to apply to magnetic azimuths, east positive; when not "
    "given it is computed from the date and position.",
    unit="degrees",
    minimum=-90.0,
    maximum=90.0,
)
DATE = Param(
    "date",
    "str",
    help="Date of the measurements (ISO, YYYY-MM-DD), for the declination model.",
)


@dataclass(frozen=True)
class CommonOption:
    """An option with the same name and meaning everywhere.

    Parameters
    ----------
    name : str
        Python name (``azimuth_ref``); the command-line flag is ``--azimuth-ref``.
    help : str
        Help text shown on the command line.
    param : Param or None
        For tool options, the declaration a tool must use to receive the value;
        ``None`` for run options, which no tool may declare.
    short : str
        Optional one-letter flag (``-q``).
    """

    name: str
    help: str
    param: Param | None = None
    short: str = ""

    @property
    def flag(self) -> str:
        """The long command-line flag."""
        return "--" + self.name.replace("_", "-")

    def describe(self) -> dict[str, object]:
        """JSON-ready description of the option."""
        return {
            "name": self.name,
            "flag": self.flag,
            "short": self.short or None,
            "help": self.help,
            "tool_param": None if self.param is None else self.param.describe(),
        }


COMMON_OPTIONS: tuple[CommonOption, ...] = (
    CommonOption("crs", CRS.help, CRS),
    CommonOption(
        "layer",
        "Layer (or spreadsheet sheet) read from every input given as FILE rather than FILE:LAYER.",
    ),
    CommonOption("azimuth_ref", AZIMUTH_REF.help, AZIMUTH_REF),
    CommonOption("declination", DECLINATION.help, DECLINATION),
    CommonOption("date", DATE.help, DATE),
    CommonOption(
        "out",
        "Output GeoPackage; files a tool writes go to its folder (OUT is the folder for a tool "
        "that writes only files).",
    ),
    CommonOption("overwrite", "Replace outputs that already exist (refused otherwise)."),
    CommonOption("quiet", "Only report errors; no progress bars.", short="-q"),
    CommonOption("verbose", "Report debugging detail (and tracebacks on failure).", short="-v"),
)

_BY_NAME = {o.name: o for o in COMMON_OPTIONS}


def common_option(name: str) -> CommonOption:
    """The shared option called ``name``.

    Raises
    ------
    KeyError
        When ``name`` is not a shared option; the message lists them.

    Examples
    --------
    >>> common_option("azimuth_ref").flag
    '--azimuth-ref'
    """
    try:
        return _BY_NAME[name]
    except KeyError:
        raise KeyError(
            f"no shared option {name!r}; shared options are: {', '.join(_BY_NAME)}"
        ) from None


def check_common_params(tool: Tool) -> list[str]:
    """Problems with how ``tool`` uses the shared option names (empty when none).

    A parameter may not take the name of a run option, and a parameter named like
    a tool option must have that option's type and choices.

    Examples
    --------
    >>> from thrustmap.tools.declare import Param, Tool
    >>> t = Tool("t", "test", dict, params=(Param("overwrite", "bool"), Param("crs", "float")))
    >>> check_common_params(t)  # doctest: +NORMALIZE_WHITESPACE
    ["parameter 'overwrite' takes the name of the run option --overwrite",
     "parameter 'crs' must be declared like the shared option --crs (type str)"]
    """
    problems = []
    for p in tool.params:
        option = _BY_NAME.get(p.name)
        if option is None:
            continue
        if option.param is None:
            problems.append(f"parameter {p.name!r} takes the name of the run option {option.flag}")
        elif (p.type, p.choices) != (option.param.type, option.param.choices):
            choices = f", choices {', '.join(option.param.choices)}" if option.param.choices else ""
            problems.append(
                f"parameter {p.name!r} must be declared like the shared option {option.flag} "
                f"(type {option.param.type}{choices})"
            )
    return problems
