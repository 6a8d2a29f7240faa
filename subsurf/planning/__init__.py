"""Before fieldwork: the antenna catalogue and its ranking for a target, acquisition settings.

Owns the choice of equipment and settings; it calls detection and waves, never the CLI.
"""
