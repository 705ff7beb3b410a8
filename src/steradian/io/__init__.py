"""File formats: one module per format, reader and writer side by side.

Files read and write values; they never compute a pattern, a metric or a synthesis (the
recipes that do both are in :mod:`steradian.workflows`).

- :mod:`~steradian.io.csv_table`: the one CSV tokenizer every CSV reader uses;
- :mod:`~steradian.io.atomic`: atomic writes (temporary file, then rename);
- :mod:`~steradian.io.formats`: the registry of weight-file formats by name and suffix;
- :mod:`~steradian.io.design`: TOML design files;
- :mod:`~steradian.io.positions_csv`, :mod:`~steradian.io.weights_csv`,
  :mod:`~steradian.io.element_table`, :mod:`~steradian.io.calibration_csv`,
  :mod:`~steradian.io.directions_csv`: the CSV inputs of a design;
- :mod:`~steradian.io.pattern_csv`: pattern cuts and u-v maps;
- :mod:`~steradian.io.beams_csv`, :mod:`~steradian.io.beams_json`,
  :mod:`~steradian.io.beams_bin`, :mod:`~steradian.io.beams_cheader`: beam tables;
- :mod:`~steradian.io.study_files`: sweep and tolerance result rows (CSV or JSON lines),
  appended as they finish and resumed.
"""
