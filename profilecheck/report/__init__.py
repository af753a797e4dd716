"""Reports of a measurement: annotated PNG, terminal table, HTML job sheet, CSV readings.

Submodules (import what you need; nothing here imports Qt):

* :mod:`.annotate` - ``draw_overlays``, ``write_annotated_png``;
* :mod:`.table` - ``format_table`` (terminal);
* :mod:`.sheet` - ``render_sheet``, ``write_sheet`` (one-page HTML job sheet);
* :mod:`.csv` - ``readings_rows``, ``write_readings_csv``, ``read_readings_csv``;
* :mod:`.outputs` - ``add_output_arguments``, ``prepare_outputs``, ``add_standard_outputs``
  for the commands (--json/--annotate/--sheet/--csv/--log in two calls), ``write_all``.
"""
