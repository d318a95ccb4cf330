"""The application: units, design files, commands, tables, figures, sweeps and the CLI.

Everything that touches files, unit strings, the terminal or figures; the core never imports it.
"""
