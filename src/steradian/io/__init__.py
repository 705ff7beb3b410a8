"""File formats: one module per format, reader and writer side by side."""
