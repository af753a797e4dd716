"""Shared test set-up: Qt on the offscreen platform unless a test asks for a real display."""

import os

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
