"""Pure science functions: no I/O, units in names, each citing its published source."""
