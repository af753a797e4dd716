"""Errors raised on bad *data*.

Two kinds of failure (``docs/conventions.md``):

* a bad *call* (wrong type, impossible parameter) raises ``ValueError`` or ``TypeError``
  naming the parameter;
* bad *data* (an image that cannot support a measurement, a designation that cannot be
  parsed, a calibration file that is damaged) raises a :class:`ProfilecheckError` subclass
  whose message a machinist understands.

The command line maps every :class:`ProfilecheckError` to exit status 2 with its message
on one line of stderr.
"""

from __future__ import annotations

__all__ = [
    "ProfilecheckError",
    "ImageError",
    "CalibrationError",
    "SpecError",
    "MeasurementError",
    "QualityError",
    "LogError",
]


class ProfilecheckError(Exception):
    """Base class: the input data cannot give a trustworthy result."""


class ImageError(ProfilecheckError):
    """An image file is missing, unreadable, truncated, too large or not an image."""


class CalibrationError(ProfilecheckError):
    """A calibration cannot be made, or a calibration file is damaged or does not fit the image."""


class SpecError(ProfilecheckError):
    """A thread designation cannot be parsed or names an unknown size, series or class."""


class MeasurementError(ProfilecheckError):
    """The target (thread, tool, reference, gauge) was not found in the image."""


class QualityError(MeasurementError):
    """The target was found but the image cannot support the claimed accuracy
    (too few teeth, low contrast, out of focus, running out of frame, damage)."""


class LogError(ProfilecheckError):
    """The inspection log cannot be opened, migrated or written."""
