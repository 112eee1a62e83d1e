"""The desktop window: the only package that imports tkinter."""
