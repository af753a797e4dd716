"""The profilecheck viewer: a desktop window over the library (PyQt5).

This is the only package of profilecheck that imports Qt, and only its widget modules do:
``model``, ``jobs``, ``readings``, ``frames``, ``live`` and ``save`` are plain Python, so
the viewer's state and logic are testable without a display. Start it with
``profilecheck view [IMAGE] [--camera N] [--cal FILE]`` (``profilecheck.commands.view``).
"""
