"""The profilecheck viewer: a desktop window over the library (PyQt5).

This is the only package of profilecheck that imports Qt, and only its widget modules do
(``canvas``, ``panels``, ``workers``, ``window``, ``app``): ``model``, ``jobs``,
``readings``, ``palette``, ``frames``, ``live``, ``tracking`` and ``save`` are plain Python,
so the viewer's state and logic are testable without a display. ``_testing`` holds a
stand-in for the library used only to test the wiring. Start it with
``profilecheck view [IMAGE] [--camera N] [--cal FILE]`` (``profilecheck.commands.view``).
"""
