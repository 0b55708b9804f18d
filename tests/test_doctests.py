"""Run every docstring example of the package as a test.

The top-level folders pinch/, network/ and io/ install as heatloom.pinch, heatloom.network and
heatloom.io, so pytest's ``--doctest-modules`` (which imports files by path) cannot import them; this
module finds the examples through the installed package instead, with pytest's NUMBER option (floats
compare at the precision written in the example) and ELLIPSIS.
"""

import doctest
import importlib
import pkgutil

import pytest
from _pytest.doctest import _get_checker, get_optionflags  # noqa: F401  (NUMBER flag registration)

SUBPACKAGES = ("heatloom.equipment", "heatloom.pinch", "heatloom.network", "heatloom.retrofit", "heatloom.studies",
               "heatloom.io")


def _modules() -> list[str]:
    # walk each subpackage on its own: in an editable install they live outside heatloom/
    names = {"heatloom", *SUBPACKAGES}
    for pkg_name in ("heatloom", *SUBPACKAGES):
        pkg = importlib.import_module(pkg_name)
        names.update(name for _, name, _ in pkgutil.walk_packages(pkg.__path__, pkg_name + "."))
    return sorted(n for n in names if not n.endswith("__main__"))


MODULES = _modules()
NUMBER = doctest.register_optionflag("NUMBER")


@pytest.mark.parametrize("module_name", MODULES)
def test_docstring_examples(module_name):
    module = importlib.import_module(module_name)
    finder = doctest.DocTestFinder()
    runner = doctest.DocTestRunner(checker=_get_checker(),
                                   optionflags=doctest.ELLIPSIS | NUMBER | doctest.NORMALIZE_WHITESPACE)
    for test in finder.find(module, module_name):
        runner.run(test)
    result = runner.summarize(verbose=False)
    assert result.failed == 0, f"{result.failed} docstring example(s) failed in {module_name}"


def test_every_subpackage_is_found():
    for sub in (*SUBPACKAGES, "heatloom.model", "heatloom.pinch.problem_table"):
        assert sub in MODULES
