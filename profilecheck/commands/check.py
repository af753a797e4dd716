"""``profilecheck check IMAGE --cal FILE --pin D [--log FILE]``: check-standard reading.

Measure a known pin with an existing calibration and record the scale error. A camera that
was bumped, refocused or zoomed since calibration shows as a scale error larger than the
uncertainties allow; the command then warns and exits 1.

Decision (normalised error, ISO 13528:2015 section 9.7, the E_n number of proficiency
testing): with ``e = D_read / D_pin - 1`` and ``U_e`` the expanded (k = 2) relative
uncertainty of the reading (which already holds the calibration's scale uncertainty, the
edge fits and edge-offset terms, :func:`profilecheck.calibration.measure_pin`) combined in
quadrature with the pin's own certificate uncertainty, the set-up has drifted when
``|e| > U_e`` (E_n > 1).
"""

from __future__ import annotations

import argparse
import math
from typing import Any

__all__ = ["register", "run", "evaluate_check"]


def register(subparsers: Any) -> None:
    p = subparsers.add_parser(
        "check", help="measure a known pin to check the calibration has not drifted",
        description="Measure a pin of known diameter with an existing calibration, record "
                    "the scale error, and warn (exit 1) when it exceeds the uncertainty: the "
                    "camera may have been bumped, refocused or zoomed.")
    p.add_argument("image", metavar="IMAGE", help="image of the check pin on the backlight")
    p.add_argument("--cal", required=True, metavar="FILE", help="calibration file (JSON)")
    p.add_argument("--pin", required=True, metavar="D",
                   help="the pin's certified diameter with its unit, e.g. 3.000mm or 0.1181in")
    p.add_argument("--pin-u", default=None, metavar="U",
                   help="expanded uncertainty (k = 2) of the pin's diameter, e.g. 1um")
    from ..report.outputs import add_output_arguments

    add_output_arguments(p, annotate=False)
    p.set_defaults(func=run)


def evaluate_check(diameter_mm: float, u_diameter_mm: float, nominal_mm: float,
                   u_nominal_mm: float = 0.0) -> dict[str, Any]:
    """Scale error of a check-standard reading and the drift decision.

    Parameters
    ----------
    diameter_mm, u_diameter_mm : float
        The pin as read with the calibration, and its expanded uncertainty (k = 2).
    nominal_mm, u_nominal_mm : float
        The pin's certified diameter and its expanded uncertainty (k = 2).

    Returns
    -------
    dict
        ``nominal_mm, measured_mm, u_mm, scale_error`` (relative, D_read/D_pin - 1),
        ``u_scale`` (relative expanded uncertainty allowed, reading and pin in quadrature,
        GUM 5.1.2), ``en`` (|e| / u_scale, ISO 13528 E_n) and ``drift`` (E_n > 1).

    Examples
    --------
    >>> r = evaluate_check(3.015, 0.001, 3.000)
    >>> round(r['scale_error'], 6), r['drift']
    (0.005, True)
    """
    for name, v in (("diameter_mm", diameter_mm), ("nominal_mm", nominal_mm)):
        if isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v) \
                or v <= 0:
            raise ValueError(f"{name} must be a positive finite number, got {v!r}")
    for name, v in (("u_diameter_mm", u_diameter_mm), ("u_nominal_mm", u_nominal_mm)):
        if isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v) \
                or v < 0:
            raise ValueError(f"{name} must be a finite number >= 0, got {v!r}")
    e = diameter_mm / nominal_mm - 1.0
    u_rel = math.hypot(u_diameter_mm / nominal_mm, u_nominal_mm / nominal_mm)
    en = abs(e) / u_rel if u_rel > 0 else (math.inf if e else 0.0)
    return {"nominal_mm": float(nominal_mm), "measured_mm": float(diameter_mm),
            "u_mm": float(u_diameter_mm), "scale_error": float(e), "u_scale": float(u_rel),
            "en": float(en), "drift": bool(en > 1.0)}


def _result_dict(args: argparse.Namespace, cal: Any, measured: Any, ev: dict[str, Any],
                 cal_sha: str | None) -> dict[str, Any]:
    from ..verdict import check_limits, overall

    pct = 100.0 * ev["scale_error"]
    band = 100.0 * ev["u_scale"]
    chk = check_limits("scale_error", pct, 0.0, -band, band, unit="%",
                       source="E_n <= 1 (ISO 13528)")
    cal_d = cal.to_dict()
    cal_d["path"] = str(args.cal)
    if cal_sha:
        cal_d["sha256"] = cal_sha
    warnings = []
    if measured.note:
        warnings.append(measured.note)
    if ev["drift"]:
        warnings.append(
            f"the {ev['nominal_mm']:.4f} mm pin reads {ev['measured_mm']:.4f} mm: scale error "
            f"{pct:+.3f} %, beyond the {band:.3f} % the uncertainties allow. The camera may "
            "have been bumped, refocused or zoomed since calibration: recalibrate before "
            "measuring.")
    return {
        "kind": "check", "image": str(args.image), "calibration": cal_d, "spec": None,
        "measurements": {
            "diameter": measured.to_dict(),
            "scale_error": {"value": pct, "u": band, "unit": "%"},
            "scale_now": {"value": cal.mm_per_px / (1.0 + ev["scale_error"]),
                          "u": cal.mm_per_px * ev["u_scale"], "unit": "mm/px"},
        },
        "verdict": {"overall": overall([chk]), "checks": [chk.to_dict()]},
        "warnings": warnings,
        "standard_check": ev,
    }


def run(args: argparse.Namespace) -> int:
    from ..calibration import load_calibration
    from ..calibration.gauges import measure_pin
    from ..imaging import load_image
    from ..log import InspectionLog, file_sha256
    from ..report.outputs import add_standard_outputs, prepare_outputs
    from ..report.table import format_table
    from ..units import parse_length
    from ._common import exit_code_for, info

    nominal = parse_length(args.pin)
    u_nom = parse_length(args.pin_u) if args.pin_u else 0.0
    if not nominal > 0:
        from ..errors import ProfilecheckError

        raise ProfilecheckError(f"--pin must be above zero, got {args.pin!r}")
    outputs = prepare_outputs(args)
    cal = load_calibration(args.cal)
    img = load_image(args.image)
    measured = measure_pin(img, cal)
    ev = evaluate_check(measured.value, measured.u, nominal, abs(u_nom))
    d = _result_dict(args, cal, measured, ev, file_sha256(args.cal))
    log_path = getattr(args, "log", None)
    args.log = None  # the check record carries its standard_check row: written below
    add_standard_outputs(outputs, args, d, img)
    outputs.commit()
    if log_path:
        job = args.job or f"check {args.image}"
        with InspectionLog(log_path) as log:
            log.record(d, job=job, image_path=args.image, calibration_path=args.cal,
                       standard_check=ev)
            history = log.standard_checks(calibration_sha256=file_sha256(args.cal))
        if len(history) > 1:
            errs = ", ".join(f"{100 * h['scale_error']:+.3f}%" for h in history[-5:])
            info(f"check-standard history for this calibration (last {min(5, len(history))}): "
                 f"{errs}")
    print(format_table(d, args.units), end="")
    for w in d["warnings"]:
        info(f"warning: {w}")
    return exit_code_for(d["verdict"]["overall"])
