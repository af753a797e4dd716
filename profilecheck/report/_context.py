"""What a result rests on, in words: image, calibration, spec (tolerant of missing keys)."""

from __future__ import annotations

from typing import Any

from ._fmt import MM_PER_IN, num

__all__ = ["calibration_summary", "spec_designation", "image_name", "spec_numbers"]


def image_name(result: dict[str, Any]) -> str:
    img = result.get("image")
    if isinstance(img, dict):
        return str(img.get("path") or img.get("name") or "")
    return "" if img is None else str(img)


def spec_designation(result: dict[str, Any]) -> str:
    spec = result.get("spec")
    if isinstance(spec, dict):
        return str(spec.get("designation") or "")
    return "" if spec is None else str(spec)


def calibration_summary(cal: Any) -> dict[str, str]:
    """Plain words for the calibration a result rests on.

    Returns keys 'file', 'gauge', 'created', 'scale', 'u_scale', 'view', 'label' (empty
    strings where the result does not say). ``cal`` is the result's ``calibration`` entry:
    a dict (a calibration's JSON, possibly with 'path'/'sha256') or a file name.
    """
    out = {k: "" for k in ("file", "gauge", "created", "scale", "u_scale", "view", "label")}
    if isinstance(cal, str):
        out["file"] = cal
        return out
    if not isinstance(cal, dict):
        return out
    out["file"] = str(cal.get("path") or cal.get("file") or "")
    out["label"] = str(cal.get("label") or "")
    out["created"] = str(cal.get("created") or "")
    g = cal.get("gauge")
    if isinstance(g, dict):
        kind = str(g.get("kind") or "gauge")
        size = num(g.get("size_mm"))
        ug = num(g.get("u_mm"))
        text = kind
        if size is not None:
            text += f" {size:.4f} mm"
            if ug is not None:
                text += f" (U {ug * 1000:.1f} \u00b5m)"
        ident = g.get("id") or g.get("serial")
        if ident:
            text += f", {ident}"
        out["gauge"] = text
    elif g:
        out["gauge"] = str(g)
    s = num(cal.get("mm_per_px"))
    us = num(cal.get("u_mm_per_px"))
    if s is not None:
        out["scale"] = f"{s * 1000:.5f} \u00b5m/px"
        if us is not None:
            out["u_scale"] = f"\u00b1 {us * 1000:.5f} \u00b5m/px (k = 2, {100 * us / s:.3f} %)"
    if "lens" in cal:
        out["view"] = "telecentric (parallel) view assumed" if not cal.get("lens") else \
            "lens model from a grid calibration"
    return out


_SPEC_KEYS = (
    ("blank_diameter", "blank diameter"),
    ("best_wire", "best wire"),
    ("wire_min", "wire, smallest"),
    ("wire_max", "wire, largest"),
    ("over_wire", "over best wires"),
    ("tip_flat", "tool tip flat"),
    ("tip_radius", "tool tip radius"),
    ("infeed_to_go", "infeed to go"),
    ("compound_infeed", "compound infeed"),
)


def _mm_text(v: float) -> str:
    return f"{v:.4f} mm ({v / MM_PER_IN:.5f} in)"


def _limit_text(v: Any) -> str:
    if isinstance(v, dict):
        lo = num(v.get("min", v.get("min_mm")))
        hi = num(v.get("max", v.get("max_mm")))
        if lo is not None and hi is not None:
            return (f"{lo:.4f} .. {hi:.4f} mm ({lo / MM_PER_IN:.5f} .. "
                    f"{hi / MM_PER_IN:.5f} in)")
        if lo is not None:
            return f"\u2265 {_mm_text(lo)}"
        if hi is not None:
            return f"\u2264 {_mm_text(hi)}"
        return ""
    f = num(v)
    return _mm_text(f) if f is not None else ""


def spec_numbers(spec: Any, result: dict[str, Any] | None = None) -> list[tuple[str, str]]:
    """(name, text) of the spec's shop numbers: blank diameter, wires and over-wire
    limits, tool tip flat/radius, infeed to go. Keys are read in both the short form of
    ``ThreadSpec.to_dict`` ('best_wire') and the ``_mm`` form ('best_wire_mm'); anything
    missing is left out."""
    if not isinstance(spec, dict):
        return []
    rows: list[tuple[str, str]] = []
    for key in ("designation", "form", "thread_class"):
        if spec.get(key):
            rows.append((key.replace("_", " "), str(spec[key])))
    pitch = num(spec.get("pitch", spec.get("pitch_mm")))
    if pitch is not None:
        tpi = num(spec.get("tpi"))
        rows.append(("pitch", f"{pitch:.4f} mm" + (f" ({tpi:g} tpi)" if tpi else "")))
    ang = num(spec.get("included_angle", spec.get("included_angle_deg")))
    if ang is not None:
        rows.append(("included angle", f"{ang:g}\u00b0"))
    for key, title in _SPEC_KEYS:
        for k in (key, key + "_mm"):
            if k in spec:
                text = _limit_text(spec[k])
                if text:
                    rows.append((title, text))
                break
    tool = spec.get("tool_tip")
    if isinstance(tool, dict):
        for a, b, title in (("flat_min", "flat_max", "tool tip flat"),
                            ("radius_min", "radius_max", "tool tip radius")):
            lo = num(tool.get(a, tool.get(a + "_mm")))
            hi = num(tool.get(b, tool.get(b + "_mm")))
            if lo is not None or hi is not None:
                rows.append((title, _limit_text({"min": lo, "max": hi})))
    comp = num(spec.get("compound_angle", spec.get("compound_angle_deg")))
    if comp is not None:
        rows.append(("compound set-over", f"{comp:g}\u00b0"))
    lim = spec.get("limits")
    if isinstance(lim, dict):
        for key in ("major_diameter", "pitch_diameter", "minor_diameter"):
            text = _limit_text(lim.get(key))
            if text:
                src = lim[key].get("source") if isinstance(lim.get(key), dict) else None
                rows.append((key.replace("_", " "), text + (f" [{src}]" if src else "")))
    if result is not None:
        ig = (result.get("measurements") or {}).get("infeed_to_go")
        if isinstance(ig, dict) and num(ig.get("value")) is not None:
            rows.append(("infeed to go (measured)", _mm_text(num(ig["value"]))))
    return rows
