"""The desktop app's entry point for PyInstaller (scripts/build-app): everything is in secretary.launch."""
import sys

from secretary.launch import main

if __name__ == "__main__":
    sys.exit(main())
