"""Calibration: the pixel-to-millimetre record, gauge calibrations, and lens models.

* :func:`calibrate_from_pin`, :func:`calibrate_from_block`: scale from one gauge width
  (the edge offset is folded into the scale);
* :func:`calibrate_from_lines`: bias-free scale from a ruled scale (and the edge offset when
  the line width is known);
* :func:`combine`: scale from a bias-free standard plus the edge offset from a pin or block;
  :func:`calibrate_from_two_pins`: both from two pins of different size;
* :func:`calibrate_grid`: lens intrinsics and distortion from checkerboard views, with
  :func:`attach_lens` to put them into a gauge calibration made in the part's plane;
* :func:`measure_pin`: diameter of a pin with an existing calibration (check standard);
* lens helpers :func:`undistort_points`, :func:`ray_tilt_rad`, :func:`ray_directions`,
  :func:`cylinder_axial_diameter_mm`.
"""

from .model import Calibration, Lens, save_calibration, load_calibration, atomic_write_text
from .gauges import calibrate_from_pin, calibrate_from_block, measure_pin
from .lines import calibrate_from_lines
from .grid import GridCalibration, calibrate_grid, calibrate_lens_from_points, find_grid_corners
from .combine import combine, attach_lens, grid_record, calibrate_from_two_pins
from .lens import (undistort_points, distort_points, ray_directions, ray_tilt_rad,
                   cylinder_apparent_diameter_mm, cylinder_axial_diameter_mm)

__all__ = [
    "Calibration", "Lens", "save_calibration", "load_calibration", "atomic_write_text",
    "calibrate_from_pin", "calibrate_from_block", "calibrate_from_lines", "measure_pin",
    "combine", "attach_lens", "grid_record", "calibrate_from_two_pins",
    "GridCalibration", "calibrate_grid", "calibrate_lens_from_points", "find_grid_corners",
    "undistort_points", "distort_points", "ray_directions", "ray_tilt_rad",
    "cylinder_apparent_diameter_mm", "cylinder_axial_diameter_mm",
]
