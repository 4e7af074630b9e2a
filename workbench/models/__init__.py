"""Pure physical and money models: numbers and arrays in, numbers, arrays or frames out.

No file I/O, no widgets, no printing; they import only ``workbench.core``.
"""
