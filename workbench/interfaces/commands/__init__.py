"""Command groups of the ``workbench`` command line, one module each."""
