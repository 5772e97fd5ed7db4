"""Available memory, read the way each operating system offers it.

The memory guard (:mod:`symcluster.pipeline.resources`) compares its estimate of a run
with this figure.  Sources, tried in this order:

``"meminfo"``
    Linux: ``MemAvailable`` of ``/proc/meminfo`` (free memory plus the page cache and
    reclaimable memory the kernel can hand out without swapping).
``"sysconf"``
    Other POSIX systems that offer it: ``os.sysconf("SC_AVPHYS_PAGES")`` times the page
    size, the pages free right now (less than the memory a run can get, since caches
    are not counted: the guard errs on the side of refusing).
``"windows"``
    Windows: ``ullAvailPhys`` of ``GlobalMemoryStatusEx`` through ``ctypes``.
``"physical"``
    A system that offers only its total physical memory (``SC_PHYS_PAGES``, e.g.
    macOS): that total.  The guard then refuses only runs that would not fit into the
    whole memory of the machine.
``"unknown"``
    Nothing of the above works: the available memory is unknown, and the guard refuses
    nothing (there is no figure to compare with); :func:`memory_reading` says so, and
    the command line's ``--force`` is then never needed.
"""

import os
import sys

__all__ = ["memory_reading", "SOURCES", "MEMINFO"]

#: the names :func:`memory_reading` reports, in the order they are tried
SOURCES = ("meminfo", "sysconf", "windows", "physical", "unknown")
#: where Linux publishes MemAvailable
MEMINFO = "/proc/meminfo"


def _meminfo():
    try:
        # bytes, not text: no codec to look up (a first solve paid 0.5 ms importing one)
        with open(MEMINFO, "rb") as fh:
            for line in fh:
                if line.startswith(b"MemAvailable:"):
                    return int(line.split()[1]) * 1024
    except (OSError, ValueError, IndexError):
        pass
    return None


def _sysconf(name):
    try:
        pages, size = os.sysconf(name), os.sysconf("SC_PAGE_SIZE")
    except (AttributeError, ValueError, OSError):
        return None
    if pages is None or size is None or pages <= 0 or size <= 0:
        return None
    return int(pages) * int(size)


def _windows():
    if not sys.platform.startswith("win"):
        return None
    try:
        import ctypes

        class _Status(ctypes.Structure):
            _fields_ = [("dwLength", ctypes.c_ulong), ("dwMemoryLoad", ctypes.c_ulong),
                        ("ullTotalPhys", ctypes.c_ulonglong),
                        ("ullAvailPhys", ctypes.c_ulonglong),
                        ("ullTotalPageFile", ctypes.c_ulonglong),
                        ("ullAvailPageFile", ctypes.c_ulonglong),
                        ("ullTotalVirtual", ctypes.c_ulonglong),
                        ("ullAvailVirtual", ctypes.c_ulonglong),
                        ("ullAvailExtendedVirtual", ctypes.c_ulonglong)]

        status = _Status()
        status.dwLength = ctypes.sizeof(_Status)
        if not ctypes.windll.kernel32.GlobalMemoryStatusEx(ctypes.byref(status)):
            return None
        return int(status.ullAvailPhys) or None
    except (AttributeError, OSError, ImportError):
        return None


def memory_reading():
    """Available memory in bytes and where the figure comes from.

    Returns
    -------
    (int or None, str)
        The bytes (None if unknown) and one of :data:`SOURCES`.

    Examples
    --------
    >>> have, source = memory_reading()
    >>> source in SOURCES and (have is None) == (source == "unknown")
    True
    """
    readers = (("meminfo", _meminfo), ("sysconf", lambda: _sysconf("SC_AVPHYS_PAGES")),
               ("windows", _windows), ("physical", lambda: _sysconf("SC_PHYS_PAGES")))
    for name, read in readers:
        have = read()
        if have is not None:
            return have, name
    return None, "unknown"
