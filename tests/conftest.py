"""The whole suite runs with one native thread per maths library, as the command line and the window do.

With the default thread pools a busy machine (several test processes, other
programs) slows the numerical tests down many times (secretary/threads.py).
"""
from secretary.threads import limit_native_threads

limit_native_threads()
