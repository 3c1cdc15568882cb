"""Reader words for the refit's candidates: author-year names instead of method keys.

Terminal prose and the HTML report name a published method by its source
(``Ramos et al. 2009``), never by its registry key (``ramos2009``); files keep the
machine names.
"""

from __future__ import annotations

import re

__all__ = ["KIND_WORDS", "NAMED_METHODS", "candidate_words", "method_words"]

#: What each kind of candidate is, in words.
KIND_WORDS = {
    "mean": "mean-only baseline: the mean of the training samples, composition ignored",
    "published": "published method as is",
    "recalibrated": "published method recalibrated, a + b x estimate",
    "pls": "partial least squares, 2 components",
    "ridge": "ridge regression, alpha by inner leave-one-out",
    "gp": "Gaussian process, constant x RBF + noise",
}

#: Names of published methods whose source has no author-year form.
NAMED_METHODS = {
    "stoichiometric": "stoichiometric iodine value",
    "aocs_cd1c85": "AOCS Cd 1c-85",
    "from_cloud_point": "CFPP from the cloud point",
    "park2008_bape": "bis-allylic oxidizability on the scale of Park et al. 2008",
    "sarin2009_from_cloud_point": "Sarin et al. 2009 pour point from the cloud point",
}

_AUTHOR = re.compile(r"^\s*([^\W\d][\w'’\-]*(?: [a-z]{1,3})?(?: [^\W\d][\w'’\-]+)?)"
                     r"\s+(?:[A-Z][a-z]?\.(?:-?[A-Z][a-z]?\.)*)\s*$")
_YEAR = re.compile(r"(1[89]\d\d|20\d\d)$")


def method_words(property_name: str, method: str) -> str:
    """Author-year name of a published method (``Ramos et al. 2009``).

    Built from the first authors of the method's citation and the year in its key;
    a method without an author-year source is named by its key in words.

    Examples
    --------
    >>> method_words("cfpp_C", "ramos2009")
    'Ramos et al. 2009'
    >>> method_words("cetane_number", "bamgboye2008")
    'Bamgboye & Hansen 2008'
    >>> method_words("cetane_number", "krisnangkura1986")
    'Krisnangkura 1986'
    """
    if method in NAMED_METHODS:
        return NAMED_METHODS[method]
    try:
        from estimator.properties.methods import get_method

        citation = get_method(property_name, method).citation
    except (KeyError, ValueError):
        citation = ""
    year = _YEAR.search(method)
    if not year or not citation:
        return method.replace("_", " ")
    authors: list[str] = []
    et_al = False
    for chunk in citation.split(","):
        chunk = chunk.strip()
        if chunk.endswith(" et al."):
            et_al = True
            chunk = chunk[: -len(" et al.")]
        match = _AUTHOR.match(chunk)
        if not match:
            break
        authors.append(match.group(1))
        if et_al:
            break
    if not authors:
        return method.replace("_", " ")
    if et_al or len(authors) > 2:
        names = f"{authors[0]} et al."
    else:
        names = " & ".join(authors)
    return f"{names} {year.group(1)}"


def candidate_words(name: str, property_name: str) -> str:
    """A candidate name in words: ``recalibrated:ramos2009`` -> ``Ramos et al. 2009, recalibrated``.

    Examples
    --------
    >>> candidate_words("published:park2008", "oxidation_stability_110C_h")
    'Park et al. 2008'
    >>> candidate_words("ridge:composition", "cfpp_C")
    'ridge on composition'
    >>> candidate_words("baseline:mean", "cfpp_C")
    'mean-only baseline'
    """
    kind, _, rest = name.partition(":")
    if kind == "published":
        return method_words(property_name, rest)
    if kind == "recalibrated":
        return f"{method_words(property_name, rest)}, recalibrated"
    if kind == "baseline":
        return "mean-only baseline"
    what = {"pls": "PLS", "ridge": "ridge", "gp": "Gaussian process"}.get(kind, kind)
    return f"{what} on {rest}" if rest else what
