"""Command-line sub-commands (interface layer). Each module: ``add_parser`` and ``run``."""
