"""Shared helpers of the tests of printed LaTeX tables (no symcluster imports)."""

import re
import shutil
import subprocess
from fractions import Fraction

PDFLATEX = shutil.which("pdflatex")


def table_rows(tex, start=r"\endlastfoot", end=r"\end{longtable}"):
    """Cells of every row of the first table body in ``tex`` (source lines joined)."""
    body = tex.split(start, 1)[1].split(end, 1)[0]
    body = body.replace(r"\addlinespace", " ")
    rows = []
    for chunk in body.split("\\\\"):
        text = " ".join(line for line in chunk.split("\n") if not line.startswith("%"))
        text = " ".join(text.split())
        if text:
            rows.append([c.strip() for c in text.split(" & ")])
    return rows


def number_from_cells(whole, frac):
    """The number printed as ``whole & frac`` (grouping thin spaces, x 10^k) as a Fraction."""
    exp = 0
    m = re.search(r"\\times 10\^\{(-?\d+)\}$", frac)
    if m:
        exp = int(m.group(1))
        frac = frac[:m.start()]
    frac = frac.replace(r"\allowbreak", "").replace(r"\,", "").replace(" ", "")
    whole = whole.replace(r"\,", "").replace(" ", "")
    assert re.fullmatch(r"-?\d+", whole) and re.fullmatch(r"\d+", frac), (whole, frac)
    value = Fraction(whole.lstrip("-") + "." + frac) * Fraction(10) ** exp
    return -value if whole.startswith("-") else value


def compile_log(tmp_path, tex, name="t"):
    """Run pdflatex twice (longtable settles its widths) and return (returncode, log text)."""
    (tmp_path / f"{name}.tex").write_text(tex)
    for _ in range(2):
        run = subprocess.run(["pdflatex", "-interaction=nonstopmode", "-halt-on-error",
                              f"{name}.tex"], cwd=tmp_path, capture_output=True, text=True,
                             timeout=180)
        if run.returncode:
            break
    return run.returncode, (tmp_path / f"{name}.log").read_text(errors="replace")
