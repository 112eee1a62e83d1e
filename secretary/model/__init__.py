"""Pure computation: numpy, scipy and the standard library only (no files, no UI)."""
