"""One module per tab of the main window."""
