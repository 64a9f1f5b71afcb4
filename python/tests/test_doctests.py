"""Runs every docstring example of the package (module, classes, functions, methods)."""

import doctest
import inspect

import subrange
import subrange.errors


def _objects():
    for module in (subrange, subrange.errors):
        yield module.__name__, module
        for name in getattr(module, "__all__", []):
            obj = getattr(module, name)
            if inspect.ismodule(obj):
                continue
            yield f"{module.__name__}.{name}", obj
            if inspect.isclass(obj):
                for attr, member in vars(obj).items():
                    if isinstance(member, (staticmethod, classmethod)):
                        member = member.__func__
                    if callable(member) or isinstance(member, property):
                        yield f"{module.__name__}.{name}.{attr}", member


def test_docstring_examples():
    parser = doctest.DocTestParser()
    runner = doctest.DocTestRunner(optionflags=doctest.ELLIPSIS)
    examples = 0
    for name, obj in _objects():
        doc = inspect.getdoc(obj) if not isinstance(obj, property) else obj.__doc__
        if not doc:
            continue
        test = parser.get_doctest(doc, dict(vars(subrange)), name, None, 0)
        examples += len(test.examples)
        runner.run(test)
    result = runner.summarize(verbose=False)
    assert result.failed == 0
    # The package documents its API with examples; losing them fails too.
    assert examples >= 25
