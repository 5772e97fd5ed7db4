"""The solve pipeline: ``resources`` (memory guard, progress) -> ``solve`` (blocks -> exact
algebra -> levels -> verification, with the shortcuts that rest on theorems, each followed by
a check that does not use it)."""
