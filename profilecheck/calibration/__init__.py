"""Calibration: the pixel-to-millimetre record, gauge calibrations, and lens models."""

from .model import Calibration, Lens, save_calibration, load_calibration, atomic_write_text

__all__ = ["Calibration", "Lens", "save_calibration", "load_calibration", "atomic_write_text"]
