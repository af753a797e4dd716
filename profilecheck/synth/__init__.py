"""Renders of known truth: backlit silhouettes of exact geometry through a camera model.

Tests, benchmarks and the demo images share these renders. Every render returns the image
and a ``truth`` dict (geometry in world mm and image px, the camera, the render settings).
Frames and signs: docs/conventions.md; world mm with +y up on the screen, image (x, y) =
(col, row) px with pixel centres on integers.

Public API
----------
Camera, render, arc_points, shapes_to_px
AxialProfile, profile_from_flanks, axial_profile_iso / _un / _whitworth / _ba / _acme /
_trapezoidal, profile_from_polyline
thread_silhouette, render_thread, outline_values, helix_pd_error_mm, helix_flank_angle_deg
render_pin, render_bar, render_gauge_block, render_scale, render_checkerboard, render_tool,
render_centre, render_tool_height, tool_polygon, cone_polygon, cylinder_silhouette_px
limb_outline (one limb, parallel view), ray_margin, ray_hits, pinhole_limb_px (ray casting)
"""

from __future__ import annotations

from ._camera import Camera
from ._profiles import (AxialProfile, axial_profile_acme, axial_profile_ba, axial_profile_iso,
                        axial_profile_trapezoidal, axial_profile_un, axial_profile_whitworth,
                        profile_from_flanks)
from ._helix import limb_outline
from ._raycast import pinhole_limb_px, ray_hits, ray_margin
from ._render import arc_points, render, shapes_to_px
from ._scenes import (cone_polygon, cylinder_silhouette_px, render_bar, render_centre,
                      render_checkerboard, render_gauge_block, render_pin, render_scale,
                      render_tool, render_tool_height, tool_polygon)
from ._thread import (helix_flank_angle_deg, helix_pd_error_mm, outline_values,
                      profile_from_polyline, render_thread, thread_silhouette)

__all__ = [
    "Camera", "render", "arc_points", "shapes_to_px",
    "AxialProfile", "profile_from_flanks", "profile_from_polyline", "axial_profile_iso",
    "axial_profile_un", "axial_profile_whitworth", "axial_profile_ba", "axial_profile_acme",
    "axial_profile_trapezoidal",
    "thread_silhouette", "render_thread", "outline_values", "helix_pd_error_mm",
    "helix_flank_angle_deg",
    "render_pin", "render_bar", "render_gauge_block", "render_scale", "render_checkerboard",
    "render_tool", "render_centre", "render_tool_height", "tool_polygon", "cone_polygon",
    "cylinder_silhouette_px", "limb_outline", "ray_hits", "ray_margin", "pinhole_limb_px",
]
