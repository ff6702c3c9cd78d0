"""The public front door: a sorted __all__ that matches what the package exports."""

import doctest

import xlfuncs
import xlfuncs.api
import xlfuncs.units


def test_all_is_sorted_and_complete():
    assert xlfuncs.__all__ == sorted(xlfuncs.__all__)
    for name in xlfuncs.__all__:
        assert hasattr(xlfuncs, name), name
    modules = type(xlfuncs)
    public = {
        n for n, v in vars(xlfuncs).items() if not n.startswith("_") and not isinstance(v, modules)
    }
    assert public <= set(xlfuncs.__all__), public - set(xlfuncs.__all__)


def test_errors_inherit_builtin_and_root():
    for cls in (
        xlfuncs.InputError,
        xlfuncs.UnitError,
        xlfuncs.TableError,
        xlfuncs.NetworkError,
        xlfuncs.SingularNetworkError,
    ):
        assert issubclass(cls, xlfuncs.XlfuncsError)
        assert issubclass(cls, ValueError)


def test_docstring_examples_run():
    for mod in (xlfuncs.api, xlfuncs.units):
        res = doctest.testmod(mod)
        assert res.attempted > 0 and res.failed == 0
