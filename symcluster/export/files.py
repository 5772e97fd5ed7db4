"""Output files: checked before a run, written whole or not at all.

Rules (docs/outputs.md, "Writing files"):

* An output goes onto a regular file or a new path only.  A directory, a device
  (``/dev/null``, ``/dev/full``), a named pipe (FIFO) or a socket is refused, since
  the write-to-a-temporary-then-rename that makes a file appear whole would replace
  the device or pipe itself by a regular file.
* A symbolic link is written through: its final target is replaced and the link
  is kept (a dangling link creates its target).
* An output may not be the same file as an input of the run (compared with
  ``os.path.samefile``, so a link or a hard link to the input counts), and two
  outputs may not be the same file.
* Several outputs are written all or none: each text in full to a temporary file
  beside its target, then all renamed into place; a failure restores what was
  there.  A replaced file keeps its permission bits.
"""

import os
import shutil
import stat
import tempfile

from symcluster.errors import InputError
from symcluster.interrupts import outputs_commit, signals_held

__all__ = ["output_target", "check_writable", "check_outputs", "write_files_atomic",
           "write_texts_atomic", "write_text_atomic"]


def _kind(mode):
    if stat.S_ISDIR(mode):
        return "a directory", "give a file name"
    if stat.S_ISCHR(mode) or stat.S_ISBLK(mode):
        return ("a device, not a regular file",
                "give the path of a file (to write no file, leave the option out)")
    if stat.S_ISFIFO(mode):
        return ("a named pipe (FIFO), not a regular file",
                "give the path of a file (outputs are written whole, never streamed)")
    if stat.S_ISSOCK(mode):
        return "a socket, not a regular file", "give the path of a file"
    return "not a regular file", "give the path of a regular file"


def output_target(path):
    """The file that writing ``path`` creates or replaces.

    ``path`` itself, or for a symbolic link its final target (links are
    written through).  The target must be a regular file or not exist yet.

    Parameters
    ----------
    path : str or os.PathLike

    Returns
    -------
    str
        Absolute path of the target.

    Raises
    ------
    InputError
        The target is a directory, a device, a FIFO or a socket, or the link
        cannot be resolved (a loop).

    Examples
    --------
    >>> import os, tempfile
    >>> d = tempfile.mkdtemp()
    >>> os.symlink("data.json", os.path.join(d, "link.json"))
    >>> os.path.basename(output_target(os.path.join(d, "link.json")))
    'data.json'
    >>> output_target(d)  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    symcluster.errors.InputError: cannot write '...': it is a directory; give a file name
    """
    shown = os.fspath(path)
    target = os.path.realpath(shown)
    try:
        st = os.stat(target)
    except FileNotFoundError:
        if os.path.islink(target):        # still a link after resolving: a loop
            raise InputError(f"cannot write {shown!r}: its symbolic links form a loop; "
                             f"give another path") from None
        return target
    except OSError as exc:
        raise InputError(f"cannot write {shown!r}: {exc.strerror}; give another path") from None
    if not stat.S_ISREG(st.st_mode):
        what, fix = _kind(st.st_mode)
        via = f" (the target of a symbolic link: {target!r})" if target != os.path.abspath(shown) \
            and os.path.islink(shown) else ""
        raise InputError(f"cannot write {shown!r}{via}: it is {what}; {fix}")
    return target


def _same_file(a, b):
    try:
        return os.path.samefile(a, b)
    except OSError:                       # one of them does not exist (yet)
        return os.path.realpath(a) == os.path.realpath(b)


@signals_held                   # a stop never leaves the test file behind
def check_writable(path):
    """Check, before any long computation, that ``path`` can be written.

    The target (see :func:`output_target`) must be a regular file or a new
    path, its directory must exist, and a file must be creatable there: a
    temporary file is created in the directory and removed again (so a
    read-only directory or a place such as /proc is caught now, not after the
    solve).

    Returns
    -------
    str
        The target path.

    Raises
    ------
    InputError
        Naming the path, the problem and the fix.

    Examples
    --------
    >>> import tempfile, os
    >>> d = tempfile.mkdtemp()
    >>> check_writable(os.path.join(d, "out.json")) == os.path.join(os.path.realpath(d), "out.json")
    True
    """
    shown = os.fspath(path)
    target = output_target(shown)
    directory = os.path.dirname(target)
    if not os.path.isdir(directory):
        raise InputError(f"cannot write {shown!r}: directory {directory!r} does not exist; "
                         f"create it or choose another path")
    try:
        fd, tmp = tempfile.mkstemp(prefix=".symcluster-check-", suffix=".tmp", dir=directory)
    except OSError as exc:
        raise InputError(f"cannot write {shown!r}: no file can be created in directory "
                         f"{directory!r} ({exc.strerror}); choose a writable directory") from None
    os.close(fd)
    _remove_quietly(tmp)
    return target


def check_outputs(outputs, inputs=()):
    """Check every output path of a run before the run (see :func:`check_writable`).

    Parameters
    ----------
    outputs : sequence of (str or None)
        Output paths; None entries are skipped.
    inputs : sequence of (str or None)
        Files the run reads; no output may be one of them.

    Raises
    ------
    InputError
        An output cannot be written, is an input of the run, or two outputs are
        the same file.

    Examples
    --------
    >>> import tempfile, os
    >>> d = tempfile.mkdtemp()
    >>> src = os.path.join(d, "c.toml")
    >>> open(src, "w").close()
    >>> check_outputs([os.path.join(d, "a.json")], inputs=[src])
    >>> check_outputs([src], inputs=[src])  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    symcluster.errors.InputError: '...c.toml' is also an input of this run ...
    """
    seen = []
    for p in outputs:
        if p is None:
            continue
        shown = os.fspath(p)
        target = check_writable(shown)
        for q in inputs:
            if q is not None and _same_file(target, os.fspath(q)):
                raise InputError(f"{shown!r} is also an input of this run ({os.fspath(q)!r}); "
                                 f"writing it would destroy the input, choose another output "
                                 f"path")
        for other, other_target in seen:
            if _same_file(target, other_target):
                raise InputError(f"{other!r} and {shown!r} are the same file; give each output "
                                 f"its own file")
        seen.append((shown, target))


def _remove_quietly(path):
    try:
        os.unlink(path)
    except OSError:
        pass


def _as_bytes(data):
    return data.encode("utf-8") if isinstance(data, str) else bytes(data)


@outputs_commit                 # a stop leaves every output complete or none, no temporaries
def write_files_atomic(outputs):
    """Write several files all or none: ``outputs`` is a list of ``(path, str or bytes)``.

    Text is written as UTF-8 with ``\\n`` line ends.  Every target is checked
    first (:func:`output_target`: regular file or new path, a symbolic link is
    written through; no two outputs the same file).  Every content is then
    written in full to a temporary file in its target's directory; only when
    all of them succeeded are they renamed into place (``os.replace``).  On any
    failure the temporaries are removed and no target file is created or
    changed: an existing target is kept under a temporary name (a hard link, or
    a copy) until every rename succeeded, and put back if a later rename fails;
    a new target is removed again.  A replaced file keeps its permission bits
    (and, where allowed, its owner); a new one gets 0o666 less the umask.

    Raises
    ------
    InputError
        If a target is not a regular file, a directory does not exist or is not
        writable, or a write fails.

    Examples
    --------
    >>> import tempfile, os
    >>> d = tempfile.mkdtemp()
    >>> write_files_atomic([(os.path.join(d, "a.txt"), "A\\n"), (os.path.join(d, "b.bin"), b"B")])
    >>> sorted(os.listdir(d))
    ['a.txt', 'b.bin']
    """
    shown = [os.fspath(p) for p, _ in outputs]
    targets = []
    for p in shown:
        t = output_target(p)
        for q, u in zip(shown, targets):
            if _same_file(t, u):
                raise InputError(f"{q!r} and {p!r} are the same file; give each output its own "
                                 f"file")
        targets.append(t)
    temps = []
    try:
        umask = os.umask(0)
        os.umask(umask)
        for path, target, (_, data) in zip(shown, targets, outputs):
            directory = os.path.dirname(target)
            try:
                fd, tmp = tempfile.mkstemp(prefix=".symcluster-", suffix=".tmp", dir=directory)
            except OSError as exc:
                raise InputError(f"cannot write {path!r}: {exc.strerror}; check that the "
                                 f"directory exists and is writable") from None
            temps.append(tmp)
            try:
                with os.fdopen(fd, "wb") as fh:
                    fh.write(_as_bytes(data))
                    fh.flush()
                    os.fsync(fh.fileno())
                _copy_mode(target, tmp, 0o666 & ~umask)
            except OSError as exc:
                raise InputError(f"cannot write {path!r}: {exc.strerror}; choose another "
                                 f"output path") from None
        placed = []                    # (target, backup or None), in the order renamed
        try:
            for path, target, tmp in zip(shown, targets, temps):
                output_target(path)    # still a regular file or a new path
                backup = _backup(path, target) if os.path.lexists(target) else None
                if backup is not None:
                    temps.append(backup)   # removed in the end either way
                try:
                    os.replace(tmp, target)
                except OSError as exc:
                    raise InputError(f"cannot write {path!r}: {exc.strerror}; choose another "
                                     f"output path") from None
                placed.append((target, backup))
        except BaseException:          # also an interruption between two renames
            stranded = []
            for done, backup in reversed(placed):
                if backup is None:
                    _remove_quietly(done)
                else:
                    try:
                        os.replace(backup, done)
                    except OSError:
                        temps.remove(backup)           # keep the old content, and say where
                        stranded.append(f"{done!r} (its old content is in {backup!r})")
            if stranded:
                raise InputError("writing the outputs failed and could not be undone for "
                                 + ", ".join(stranded) + "; restore them by hand") from None
            raise
    finally:
        for tmp in temps:
            if os.path.lexists(tmp):
                _remove_quietly(tmp)


def _copy_mode(target, tmp, default):
    """Give the temporary file the mode (and owner, if allowed) of the file it replaces."""
    try:
        st = os.stat(target)
    except FileNotFoundError:
        os.chmod(tmp, default)
        return
    os.chmod(tmp, stat.S_IMODE(st.st_mode))
    try:
        if (st.st_uid, st.st_gid) != (os.geteuid(), os.getegid()):
            os.chown(tmp, st.st_uid, st.st_gid)
    except (OSError, AttributeError):
        pass                           # not allowed: the new file is the writer's


def _backup(path, target):
    """A temporary second name (hard link, else a copy) of the existing file ``target``."""
    directory = os.path.dirname(target)
    try:
        fd, name = tempfile.mkstemp(prefix=".symcluster-old-", suffix=".tmp", dir=directory)
        os.close(fd)
        os.unlink(name)
        try:
            os.link(target, name)
        except OSError:
            shutil.copy2(target, name)
        return name
    except OSError as exc:
        raise InputError(f"cannot write {path!r}: the existing file cannot be kept aside while "
                         f"the outputs are written ({exc.strerror}); choose another path") from None


def write_texts_atomic(outputs):
    """Write several texts all or none: ``outputs`` is a list of ``(path, text)``.

    The same as :func:`write_files_atomic` (which also takes bytes).

    Examples
    --------
    >>> import tempfile, os
    >>> d = tempfile.mkdtemp()
    >>> write_texts_atomic([(os.path.join(d, "a.txt"), "A\\n")])
    >>> open(os.path.join(d, "a.txt")).read()
    'A\\n'
    """
    write_files_atomic(outputs)


def write_text_atomic(path, text):
    """Write ``text`` to ``path`` whole or not at all (see :func:`write_files_atomic`).

    Raises
    ------
    InputError
        If the target is not a regular file or a new path, or the directory
        does not exist or is not writable.

    Examples
    --------
    >>> import tempfile, os
    >>> d = tempfile.mkdtemp()
    >>> write_text_atomic(os.path.join(d, "x.txt"), "hello\\n")
    >>> open(os.path.join(d, "x.txt")).read()
    'hello\\n'
    """
    write_files_atomic([(path, text)])
