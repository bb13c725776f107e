"""The examples in the modules' docstrings run as tests: a docstring that shows a figure must print it.

Each ``>>>`` example is a small worked case (several quote their source beside the value); a module
whose examples drift from its code fails here instead of misleading its reader.
"""
import doctest
import importlib
import pkgutil

import pytest

import explore
import placement
import router

MODULES = sorted(m.name for pkg in (router, placement, explore)
                 for m in pkgutil.walk_packages(pkg.__path__, pkg.__name__ + "."))


@pytest.mark.parametrize("name", MODULES)
def test_docstring_examples(name):
    module = importlib.import_module(name)
    result = doctest.testmod(module, optionflags=doctest.ELLIPSIS | doctest.NORMALIZE_WHITESPACE)
    assert result.failed == 0, f"{result.failed} of {result.attempted} docstring examples of {name} fail"
