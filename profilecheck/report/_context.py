"""What a result rests on, in words: image, calibration, spec (tolerant of missing keys)."""

from __future__ import annotations

from typing import Any

from ._fmt import MM_PER_IN, num

__all__ = ["calibration_summary", "spec_designation", "image_name", "spec_numbers", "infeed_rows"]


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
    ("radial_depth", "radial depth of thread"),
    ("compound_travel", "compound travel, full depth"),
    ("infeed_to_go", "infeed to go"),
)


def _value(v: Any) -> float | None:
    """A number, or the ``value`` of a ``{value, unit}`` dict (ThreadSpec.to_dict)."""
    if isinstance(v, dict):
        return num(v.get("value"))
    return num(v)


def _mm_text(v: float) -> str:
    return f"{v:.4f} mm ({v / MM_PER_IN:.5f} in)"


def _limit_text(v: Any) -> str:
    """'a .. b mm (a' .. b' in)' from {min, max}, a value from {value} or a number."""
    if isinstance(v, dict):
        lo = num(v.get("min", v.get("min_mm")))
        hi = num(v.get("max", v.get("max_mm")))
        val = num(v.get("value"))
        if lo is not None and hi is not None:
            if val is not None:
                return f"{_mm_text(val)}; range {lo:.4f} .. {hi:.4f} mm"
            return (f"{lo:.4f} .. {hi:.4f} mm ({lo / MM_PER_IN:.5f} .. "
                    f"{hi / MM_PER_IN:.5f} in)")
        if val is not None:
            return _mm_text(val)
        if lo is not None:
            return f"\u2265 {_mm_text(lo)}"
        if hi is not None:
            return f"\u2264 {_mm_text(hi)}"
        return ""
    f = num(v)
    return _mm_text(f) if f is not None else ""


def spec_numbers(spec: Any, result: dict[str, Any] | None = None, *,
                 skip_limits: tuple[str, ...] | frozenset[str] = ()) -> list[tuple[str, str]]:
    """(name, text) of the spec's shop numbers: blank diameter, wires and over-wire
    limits, tool tip flat/radius, depth and compound travel, and (from the result) the
    infeed still to go. Numbers are read as plain values or ``{value, unit}`` /
    ``{min, max}`` dicts (``ThreadSpec.to_dict``), with or without an ``_mm`` suffix on the
    key; anything missing is left out. Diameter limits named in ``skip_limits`` (already
    shown beside their readings) are left out too."""
    rows: list[tuple[str, str]] = []
    if isinstance(spec, dict):
        for key in ("designation", "form", "thread_class"):
            if spec.get(key):
                rows.append((key.replace("_", " "), str(spec[key])))
        pitch = _value(spec.get("pitch", spec.get("pitch_mm")))
        if pitch is not None:
            tpi = num(spec.get("tpi"))
            rows.append(("pitch", f"{pitch:.4f} mm" + (f" ({tpi:g} tpi)" if tpi else "")))
        ang = _value(spec.get("included_angle", spec.get("included_angle_deg")))
        if ang is not None:
            rows.append(("included angle", f"{ang:g}\u00b0"))
        for key, title in _SPEC_KEYS:
            for k in (key, key + "_mm"):
                if k in spec:
                    text = _limit_text(spec[k])
                    if text:
                        rows.append((title, text))
                    break
        rows.extend(_tool_rows(spec.get("tool_tip")))
        comp = _value(spec.get("compound_angle", spec.get("compound_angle_deg")))
        if comp is not None:
            rows.append(("compound set-over", f"{comp:g}\u00b0"))
        lim = spec.get("limits")
        if isinstance(lim, dict):
            for key in ("major_diameter", "pitch_diameter", "minor_diameter"):
                if key in skip_limits:
                    continue
                text = _limit_text(lim.get(key))
                if text:
                    src = lim[key].get("source") if isinstance(lim.get(key), dict) else None
                    rows.append((key.replace("_", " "),
                                 text + (f" [{src}]" if src and len(str(src)) < 40 else "")))
    if result is not None:
        rows.extend(infeed_rows(result))
    return rows


def _tool_rows(tool: Any) -> list[tuple[str, str]]:
    if not isinstance(tool, dict):
        return []
    rows = []
    for name, flat_keys in (("flat", ("flat_min", "flat_max")),
                            ("radius", ("radius_min", "radius_max"))):
        sub = tool.get(name)
        if isinstance(sub, dict):
            lo, hi = num(sub.get("min")), num(sub.get("max"))
        else:
            lo = num(tool.get(flat_keys[0], tool.get(flat_keys[0] + "_mm")))
            hi = num(tool.get(flat_keys[1], tool.get(flat_keys[1] + "_mm")))
        if lo is not None or hi is not None:
            pref = " (preferred)" if tool.get("kind") == name else ""
            rows.append((f"tool tip {name}{pref}", _limit_text({"min": lo, "max": hi})))
    return rows


def infeed_rows(result: dict[str, Any]) -> list[tuple[str, str]]:
    """Infeed still to go from a thread result's ``infeed`` entry (radial and compound
    travel with U, and the advice note), or from an ``infeed_to_go`` measurement."""
    rows: list[tuple[str, str]] = []
    inf = result.get("infeed")
    if isinstance(inf, dict):
        for key, title in (("radial", "infeed to go, radial"),
                           ("compound", "infeed to go, compound")):
            m = inf.get(key)
            v = _value(m)
            if v is not None:
                u = num(m.get("u")) if isinstance(m, dict) else None
                text = _mm_text(v) + (f" \u00b1 {u * 1000:.1f} \u00b5m" if u else "")
                if key == "compound":
                    ang = _value(inf.get("compound_angle"))
                    if ang is not None:
                        text += f" at {ang:g}\u00b0"
                rows.append((title, text))
        if inf.get("note"):
            rows.append(("infeed advice", str(inf["note"])))
    meas = result.get("measurements") or {}
    ig = meas.get("infeed_to_go") if isinstance(meas, dict) else None
    if isinstance(ig, dict) and num(ig.get("value")) is not None:
        rows.append(("infeed to go (measured)", _mm_text(num(ig["value"]))))
    return rows
