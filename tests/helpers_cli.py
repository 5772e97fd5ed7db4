"""Shared helpers of the command-line tests (test modules import from here, never from each
other)."""


def error_line(capsys, quiet_stdout=False):
    """The one ``symcluster: error: ...`` line a failed in-process ``main(argv)`` printed.

    Asserts exactly one line on standard error, that it starts with ``symcluster: error: ``,
    that no traceback was printed and, with ``quiet_stdout``, that standard output stayed
    empty.
    """
    captured = capsys.readouterr()
    lines = captured.err.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("symcluster: error: "), captured.err
    assert "Traceback" not in captured.err
    if quiet_stdout:
        assert captured.out == "", captured.out
    return lines[0]
