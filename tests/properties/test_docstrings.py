"""Docstring meta-test: parameters documented, units from the glossary, references cited.

Walks every public function of the property modules and checks its numpydoc
Parameters and Returns sections against :data:`estimator.properties.units.UNITS`
(style guide 5.4). The checker itself is tested on deliberately bad docstrings,
so a checker that accepts everything cannot pass.
"""

from __future__ import annotations

import importlib
import inspect
import re

import pytest

from estimator.properties.units import UNITS

DESCRIPTOR_MODULES = ("descriptors",)
CORRELATION_MODULES = ("ignition", "cold_flow", "stability", "transport", "energy")

#: Types whose entries may go without a unit (text, flags, mappings, choices).
UNITLESS_TYPE = re.compile(r"^(\{|(str|bool|dict|mapping|sequence of str)\b)", re.IGNORECASE)
TRAILING_UNIT = re.compile(r"\[([^\[\]]+)\]\s*$")
SKIPPED_KINDS = (inspect.Parameter.VAR_POSITIONAL, inspect.Parameter.VAR_KEYWORD)


def public_functions(module):
    """Functions defined in ``module``, public, and listed in ``__all__`` if it has one."""
    names = getattr(module, "__all__", None)
    if names is None:
        names = [n for n in vars(module) if not n.startswith("_")]
    return [
        obj
        for name in names
        if not name.startswith("_")
        and inspect.isfunction(obj := getattr(module, name))
        and obj.__module__ == module.__name__
    ]


def sections(doc: str) -> dict[str, list[str]]:
    """Split a cleaned numpydoc docstring into ``{header: body lines}``."""
    lines = doc.splitlines()
    out: dict[str, list[str]] = {}
    current = None
    i = 0
    while i < len(lines):
        header = lines[i].strip()
        underline = lines[i + 1].strip() if i + 1 < len(lines) else ""
        if header and len(underline) >= 3 and set(underline) == {"-"}:
            current = header
            out[current] = []
            i += 2
            continue
        if current is not None:
            out[current].append(lines[i])
        i += 1
    return out


def entries(body: list[str]) -> list[tuple[str, str, str]]:
    """``(name, type, description)`` per entry; unindented lines start an entry.

    ``name : type`` gives both; a line without `` : `` is a name in Parameters and a
    type in Returns, so the caller decides (both fields hold the same text).
    """
    out: list[list[str]] = []
    for line in body:
        if not line.strip():
            continue
        if not line[0].isspace():
            if " : " in line:
                name, type_ = line.split(" : ", 1)
            else:
                name = type_ = line
            out.append([name.strip(), type_.strip(), ""])
        elif out:
            out[-1][2] = f"{out[-1][2]} {line.strip()}".strip()
    return [tuple(e) for e in out]


def unit_problem(where: str, type_: str, description: str) -> str | None:
    match = TRAILING_UNIT.search(description)
    if match is None:
        if UNITLESS_TYPE.match(type_):
            return None
        return f"{where}: description does not end with a [unit]"
    if match.group(1) not in UNITS:
        return f"{where}: unit [{match.group(1)}] is not in estimator.properties.units.UNITS"
    return None


def docstring_problems(func, *, require_references: bool) -> list[str]:
    """Every breach of the docstring rules in ``func``; empty when it complies."""
    doc = inspect.getdoc(func)
    if not doc:
        return ["no docstring"]
    parts = sections(doc)
    problems = []

    documented = set()
    for names, type_, description in entries(parts.get("Parameters", [])):
        for name in (n.strip().lstrip("*") for n in names.split(",")):
            documented.add(name)
            problem = unit_problem(f"parameter {name!r}", type_, description)
            if problem:
                problems.append(problem)
    signature = inspect.signature(func).parameters.values()
    for param in signature:
        if param.kind not in SKIPPED_KINDS and param.name not in documented:
            problems.append(f"parameter {param.name!r} is not documented")
    stale = documented - {p.name for p in signature}
    problems.extend(f"documented parameter {n!r} is not in the signature" for n in sorted(stale))

    if not entries(parts.get("Returns", [])):
        problems.append("no Returns section (the unit of the result is undocumented)")
    for name, type_, description in entries(parts.get("Returns", [])):
        problem = unit_problem(f"return {name!r}", type_, description)
        if problem:
            problems.append(problem)

    if require_references and not any(line.strip() for line in parts.get("References", [])):
        problems.append("no References section")
    return problems


def _cases():
    for module_name in DESCRIPTOR_MODULES + CORRELATION_MODULES:
        module = importlib.import_module(f"estimator.properties.{module_name}")
        for func in public_functions(module):
            yield pytest.param(
                func, module_name in CORRELATION_MODULES, id=f"{module_name}.{func.__name__}"
            )


CASES = list(_cases())


@pytest.mark.parametrize(("func", "require_references"), CASES)
def test_public_function_docstring_documents_parameters_units_and_references(
    func, require_references
):
    problems = docstring_problems(func, require_references=require_references)
    assert not problems, f"{func.__module__}.{func.__name__}:\n  " + "\n  ".join(problems)


def test_every_property_module_contributes_functions_to_the_meta_test():
    modules = {case.id.split(".")[0] for case in CASES}
    assert modules == set(DESCRIPTOR_MODULES + CORRELATION_MODULES)
    assert len(CASES) >= 40


def _spelling_key(unit: str) -> str:
    """Fold the ways one unit gets written: spaces, carets, case, ``-`` for ``1``, degree sign."""
    key = re.sub(r"[\s^*·]", "", unit).replace("°", "deg").casefold()
    return "1" if key in {"-", "1", ""} else key


def test_units_vocabulary_has_one_spelling_per_unit():
    seen: dict[str, str] = {}
    clashes = []
    for unit in UNITS:
        key = _spelling_key(unit)
        if key in seen:
            clashes.append((seen[key], unit))
        seen.setdefault(key, unit)
    assert not clashes


def test_units_vocabulary_entries_have_a_one_line_meaning():
    assert all(isinstance(v, str) and v.strip() and "\n" not in v for v in UNITS.values())


def test_spelling_key_folds_known_variants_together():
    assert _spelling_key("wt %") == _spelling_key("wt%")
    assert _spelling_key("mm^2/s") == _spelling_key("mm2/s")
    assert _spelling_key("-") == _spelling_key("1")
    assert _spelling_key("°C") == _spelling_key("degC")
    assert _spelling_key("kg/m3") != _spelling_key("g/mol")


# --- the checker rejects what it should --------------------------------------------------


def _good(wt_pct, basis="fame"):
    """Summary.

    Parameters
    ----------
    wt_pct : array_like
        Composition. [wt %]
    basis : {'fame', 'oil'}

    Returns
    -------
    ndarray
        Something. [g/mol]

    References
    ----------
    .. [1] A source.
    """


def _undocumented_parameter(wt_pct, temperature_C, *args, **kwargs):
    """Summary.

    Parameters
    ----------
    wt_pct : array_like
        Composition. [wt %]

    Returns
    -------
    out : ndarray
        Something. [degC]

    References
    ----------
    .. [1] A source.
    """


def _bad_units(wt_pct, name):
    """Summary.

    Parameters
    ----------
    wt_pct : array_like
        Composition. [wt%]
    name : str
        A label, needs no unit.

    Returns
    -------
    out : ndarray
        Something with no unit.
    """


def test_checker_accepts_a_complete_docstring():
    assert docstring_problems(_good, require_references=True) == []


def test_checker_reports_undocumented_parameter_but_not_star_args():
    problems = docstring_problems(_undocumented_parameter, require_references=True)
    assert problems == ["parameter 'temperature_C' is not documented"]


def test_checker_reports_unknown_unit_missing_unit_and_missing_references():
    problems = docstring_problems(_bad_units, require_references=True)
    assert problems == [
        "parameter 'wt_pct': unit [wt%] is not in estimator.properties.units.UNITS",
        "return 'out': description does not end with a [unit]",
        "no References section",
    ]
    assert "no References section" not in docstring_problems(_bad_units, require_references=False)


def test_checker_reports_missing_returns_and_stale_parameter():
    def stale(x):
        """Summary.

        Parameters
        ----------
        x : float
            Value. [K]
        y : float
            Gone. [K]
        """

    assert docstring_problems(stale, require_references=False) == [
        "documented parameter 'y' is not in the signature",
        "no Returns section (the unit of the result is undocumented)",
    ]
