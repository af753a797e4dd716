"""One module per CLI subcommand; see ``profilecheck.cli``."""
