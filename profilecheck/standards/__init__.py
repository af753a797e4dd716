"""Thread standards: designations, basic profiles, class limits, tools and wires.

``thread_spec('1/4-20 UNC-2A')`` returns a frozen :class:`ThreadSpec` (lengths in mm,
angles in degrees). Forms: Unified UN/UNR (ASME B1.1), ISO metric (ISO 68-1, 261, 965-1),
Whitworth form (BS 84: BSW, BSF, ME, BSB), BA (BS 93), Acme (ASME B1.5) and ISO
trapezoidal (ISO 2901/2904, basic dimensions only). A leaf package: it imports only
``profilecheck.errors`` and ``profilecheck.units``.
"""

from __future__ import annotations

from ..errors import SpecError
from .designation import EXAMPLES, Designation, format_designation, parse_designation
from .spec import BASIC_ONLY, BasicProfile, Limit, ThreadSpec, ToolTip

__all__ = ["thread_spec", "ThreadSpec", "Limit", "BasicProfile", "ToolTip", "Designation",
           "parse_designation", "format_designation", "BASIC_ONLY", "SpecError"]


def thread_spec(designation: str) -> ThreadSpec:
    """Everything the standards say about a designated thread.

    Parameters
    ----------
    designation : str
        e.g. ``'1/4-20 UNC-2A'``, ``'M6x1-6g'``, ``'1/4 BSW'``, ``'4BA'``,
        ``'1/2-10 ACME-2G'``, ``'Tr20x4-7e'`` (grammar: :mod:`.designation`).

    Returns
    -------
    ThreadSpec

    Raises
    ------
    TypeError
        If `designation` is not a string.
    SpecError
        With a one-line reason and valid examples, if the designation cannot be read,
        names an unknown size, series or class, or has a zero or negative pitch or diameter.

    Examples
    --------
    >>> s = thread_spec('1/4-20 UNC-2A')
    >>> round(s.limits['pitch_diameter'].max_mm / 25.4, 4)
    0.2164
    """
    d = parse_designation(designation)
    if d.family == "unified":
        from .unified import unified_spec
        return unified_spec(d, designation)
    if d.family == "metric":
        from .iso_metric import metric_spec
        return metric_spec(d, designation)
    if d.family == "whitworth":
        from .whitworth import whitworth_spec
        return whitworth_spec(d, designation)
    if d.family == "ba":
        from .ba import ba_spec
        return ba_spec(d, designation)
    if d.family == "acme":
        from .acme import acme_spec
        return acme_spec(d, designation)
    if d.family == "trapezoidal":
        from .trapezoidal import trapezoidal_spec
        return trapezoidal_spec(d, designation)
    raise SpecError(f"{designation!r}: unknown thread family; valid examples: {EXAMPLES}")
