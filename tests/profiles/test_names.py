"""Tests of the species notation parser, ``estimator.profiles.names``.

Sources for the expected keys:

* Lipid numbers ``C:D``, ``cis``/``trans``, ``Δ`` positions counted from the
  carboxyl end, ``n-``/``ω-`` counted from the methyl end, and systematic names
  such as ``cis-9-octadecenoic``: IUPAC-IUB Commission on Biochemical
  Nomenclature, "The nomenclature of lipids", Eur. J. Biochem. 79 (1977) 11
  (from memory). Cited below as "IUPAC 1977 (from memory)".
* Trivial names (oleic = cis-9-octadecenoic, ...) and their abbreviations
  (ALA, GLA, EPA, DHA): standard lipid chemistry, marked ``# common practice``.
* The shorthand that GC reports and lab sheets write (``C18:1n9c``, ``9t``,
  ``ME``, ``FAME``, NIST-library style ``9-Octadecenoic acid, methyl ester, (E)-``)
  is marked ``# common practice``.
"""

from __future__ import annotations

import re
import subprocess
import sys

import pytest
from hypothesis import given
from hypothesis import strategies as st

from estimator.errors import UnknownSpeciesError
from estimator.profiles.names import (
    OTHER,
    canonical_species,
    is_species_like,
    species_spellings,
)
from estimator.tables import species_keys, species_table

KEYS = species_keys()
TABLE = species_table()

# (notation, expected key)
LIPID_NUMBERS = [
    # IUPAC 1977 (from memory): lipid number C:D, with and without the C
    ("C18:1", "C18:1"),
    ("18:1", "C18:1"),
    ("C16:0", "C16:0"),
    # common practice: case and spacing of GC report headers
    ("c18:1", "C18:1"),
    ("C 18:1", "C18:1"),
    ("C18 : 1", "C18:1"),
    ("  C18:1  ", "C18:1"),
    ("C18_1", "C18:1"),
    ("C18.1", "C18:1"),
    # IUPAC 1977 (from memory): n- (omega) numbering from the methyl end
    ("C18:1n9", "C18:1"),
    ("C18:1n-9", "C18:1"),
    ("C18:1 (n-9)", "C18:1"),
    ("C18:1 ω-9", "C18:1"),
    ("C18:1 ω9", "C18:1"),
    ("C18:1 omega-9", "C18:1"),
    ("C18:1 w-9", "C18:1"),  # common practice: 'w' typed for omega
    # IUPAC 1977 (from memory): cis and Δ positions from the carboxyl end
    ("C18:1 cis-9", "C18:1"),
    ("cis-9-C18:1", "C18:1"),
    ("C18:1 Δ9", "C18:1"),
    ("C18:1 delta-9", "C18:1"),
    ("C18:1 (9Z)", "C18:1"),
    # common practice: compact cis marks of GC reports
    ("C18:1c9", "C18:1"),
    ("C18:1 9c", "C18:1"),
    ("C18:1n9c", "C18:1"),
    ("C18:1 c", "C18:1"),
    # trans marks: IUPAC 1977 (from memory) for trans-9 and 9E; the rest common practice
    ("C18:1t", "C18:1t"),
    ("C18:1 trans-9", "C18:1t"),
    ("C18:1 9t", "C18:1t"),
    ("t9-C18:1", "C18:1t"),
    ("C18:1 (9E)", "C18:1t"),
    ("C18:1n9t", "C18:1t"),
    ("C18:1 n-9 trans", "C18:1t"),
    # positional isomers with a row of their own; n = 18 - 15 = 3, 18 - 12 = 6
    ("C18:3", "C18:3"),
    ("C18:3n3", "C18:3"),
    ("C18:3 (n-3)", "C18:3"),
    ("C18:3 cis-9,12,15", "C18:3"),
    ("C18:3 all-cis-9,12,15", "C18:3"),
    ("C18:3n6", "C18:3n6"),
    ("C18:3 n6", "C18:3n6"),
    ("C18:3 (n-6)", "C18:3n6"),
    ("C18:3 ω-6", "C18:3n6"),
    ("C18:3 cis-6,9,12", "C18:3n6"),
    ("C18:3 Δ6,9,12", "C18:3n6"),
    ("C18:3 Δ6", "C18:3n6"),  # only the n-6 row has a bond at 6
    # hydroxy fatty acid (ricinoleic, 12-hydroxy-cis-9-octadecenoic); common practice
    ("C18:1 12-OH", "C18:1OH"),
    ("C18:1OH", "C18:1OH"),
    ("C18:1 OH", "C18:1OH"),
    ("12-OH-C18:1", "C18:1OH"),
    # common practice: ester suffixes on lipid numbers
    ("C16:0 ME", "C16:0"),
    ("C16:0 FAME", "C16:0"),
    ("C16:0 methyl ester", "C16:0"),
    ("C20:5n3", "C20:5"),
    ("C22:6n3", "C22:6"),
    ("C22:1n9", "C22:1"),
]

POOLED_ISOMERS = [
    # cis positional isomers without a row pool into the plain key (module docstring rule)
    ("C18:1 n-7", "C18:1"),  # vaccenic; common practice
    ("C18:1 cis-11", "C18:1"),  # vaccenic, same bond counted from the carboxyl end
    ("C20:1 n-11", "C20:1"),  # gadoleic (cis-9-eicosenoic); common practice
    ("C22:1 n-11", "C22:1"),  # cetoleic; common practice
    ("C18:1 trans-11", "C18:1t"),  # trans-vaccenic pools into the trans row
]

NAMES = [
    # common practice: trivial names of fatty acids
    ("oleic", "C18:1"),
    ("linoleic", "C18:2"),
    ("α-linolenic", "C18:3"),
    ("alpha-linolenic", "C18:3"),
    ("ALA", "C18:3"),
    ("linolenic", "C18:3"),
    ("γ-linolenic", "C18:3n6"),
    ("gamma-linolenic", "C18:3n6"),
    ("GLA", "C18:3n6"),
    ("palmitic", "C16:0"),
    ("stearic", "C18:0"),
    ("lauric", "C12:0"),
    ("myristic", "C14:0"),
    ("erucic", "C22:1"),
    ("elaidic", "C18:1t"),
    ("ricinoleic", "C18:1OH"),
    ("EPA", "C20:5"),
    ("DHA", "C22:6"),
    ("Vaccenic", "C18:1"),
    # acid names; systematic ones IUPAC 1977 (from memory)
    ("oleic acid", "C18:1"),
    ("Oleic Acid", "C18:1"),
    ("octadecanoic acid", "C18:0"),
    ("hexadecanoic acid", "C16:0"),
    ("cis-9-octadecenoic acid", "C18:1"),
    ("cis-11-eicosenoic acid", "C20:1"),
    ("cis-6-octadecenoic acid", "C18:1n12"),  # petroselinic has its own row
    ("trans-9-octadecenoic acid", "C18:1t"),
    ("all-cis-6,9,12-octadecatrienoic acid", "C18:3n6"),
    ("12-hydroxy-cis-9-octadecenoic acid", "C18:1OH"),
    # IUPAC 1977 (from memory): infix positions and Z/E descriptors
    ("octadec-9-enoic acid", "C18:1"),
    ("(9Z,12Z)-octadeca-9,12-dienoic acid", "C18:2"),
    ("(9Z,12Z,15Z)-octadeca-9,12,15-trienoic acid", "C18:3"),
    ("(R,Z)-12-hydroxyoctadec-9-enoic acid", "C18:1OH"),
    ("(5Z,8Z,11Z,14Z,17Z)-icosa-5,8,11,14,17-pentaenoic acid", "C20:5"),
    # common practice: methyl ester names
    ("methyl oleate", "C18:1"),
    ("Methyl Palmitate", "C16:0"),
    ("methyl linoleate", "C18:2"),
    ("methyl γ-linolenate", "C18:3n6"),
    ("methyl erucate", "C22:1"),
    ("methyl ricinoleate", "C18:1OH"),
    ("oleic acid methyl ester", "C18:1"),
    ("palmitic acid ME", "C16:0"),
    ("methyl cis-9-octadecenoate", "C18:1"),
    ("methyl octadecanoate", "C18:0"),
    ("methyl 12-hydroxy-cis-9-octadecenoate", "C18:1OH"),
    # common practice: NIST mass-spectral library hit names in GC-MS reports
    ("Hexadecanoic acid, methyl ester", "C16:0"),
    ("9-Octadecenoic acid (Z)-, methyl ester", "C18:1"),
    ("9-Octadecenoic acid, methyl ester, (E)-", "C18:1t"),
    ("9,12-Octadecadienoic acid (Z,Z)-, methyl ester", "C18:2"),
    # common practice: name and lipid number together
    ("Oleic acid (C18:1)", "C18:1"),
    ("C20:5n3 (EPA)", "C20:5"),
    ("gamma-linolenic [C18:3 n-6]", "C18:3n6"),
    ("trans-vaccenic (C18:1t)", "C18:1t"),
]

UNICODE_AND_SEPARATORS = [
    ("C18:1\u00a0n\u20139", "C18:1"),  # non-breaking space, en dash
    ("C18:1 n\u20149", "C18:1"),  # em dash
    ("C18:1 n\u22129", "C18:1"),  # minus sign
    ("C18:1\u2009(n-9)", "C18:1"),  # thin space
    ("C18:1\u200bn9", "C18:1"),  # zero-width space
    ("Ｃ18:1", "C18:1"),  # full-width C
    ("C18:3 Ω-6", "C18:3n6"),  # capital omega
    ("\u03b3\u2011linolenic", "C18:3n6"),  # gamma, non-breaking hyphen
    ("alpha_linolenic", "C18:3"),
    ("ALPHA  LINOLENIC", "C18:3"),
    ("methyl\u00a0oleate", "C18:1"),
    ("palmitic_acid_methyl_ester", "C16:0"),
]

OTHER_SPELLINGS = [
    "other",
    "Others",
    "OTHER",
    "unidentified",
    "unknown",
    "not identified",
    "Not-identified",
    "rest",
    "minor",
    "sum of minor peaks",
    "Sum of Minor Peaks",
    "unidentified peaks",
    "Others (unidentified)",
    "other FAME",
]


@pytest.mark.parametrize(("notation", "key"), LIPID_NUMBERS)
def test_lipid_number_notation_maps_to_its_key(notation: str, key: str) -> None:
    assert canonical_species(notation) == key


@pytest.mark.parametrize(("notation", "key"), POOLED_ISOMERS)
def test_positional_isomer_without_row_pools_into_plain_key(notation: str, key: str) -> None:
    assert canonical_species(notation) == key


@pytest.mark.parametrize(("notation", "key"), NAMES)
def test_fatty_acid_or_ester_name_maps_to_its_key(notation: str, key: str) -> None:
    assert canonical_species(notation) == key


@pytest.mark.parametrize(("notation", "key"), UNICODE_AND_SEPARATORS)
def test_unicode_and_separator_variants_map_to_key(notation: str, key: str) -> None:
    assert canonical_species(notation) == key


@pytest.mark.parametrize("notation", OTHER_SPELLINGS)
def test_unidentified_mass_spellings_map_to_other(notation: str) -> None:
    assert canonical_species(notation) == OTHER


def test_other_constant_is_the_string_other() -> None:
    assert OTHER == "other"


@pytest.mark.parametrize("key", KEYS)
def test_table_names_map_to_their_own_key(key: str) -> None:
    row = TABLE.loc[key]
    for column in ("common_name", "systematic_name", "fame_name"):
        assert canonical_species(row[column]) == key, (column, row[column])


def test_every_known_spelling_maps_to_its_key() -> None:
    wrong = {s: (k, canonical_species(s)) for s, k in species_spellings().items()}
    assert {s: v for s, v in wrong.items() if v[0] != v[1]} == {}


def test_species_spellings_cover_keys_and_synonyms_and_are_a_fresh_copy() -> None:
    spellings = species_spellings()
    assert set(KEYS) <= set(spellings)
    assert spellings["gla"] == "C18:3n6"
    assert spellings["methyl oleate"] == "C18:1"
    spellings.clear()
    assert species_spellings()["C18:1"] == "C18:1"


# --- unknown names: the whole one-line message -------------------------------------------


@pytest.mark.parametrize(
    ("notation", "message"),
    [
        ("C19:0", "unknown species 'C19:0'; close matches: C18:0, C20:0"),
        ("C21:0", "unknown species 'C21:0'; close matches: C20:0, C22:0"),
        ("C19:1", "unknown species 'C19:1'; close matches: C18:1, C18:1n12, C20:1"),
        ("nonadecanoic acid", "unknown species 'nonadecanoic acid'; close matches: C18:0, C20:0"),
        ("olec acid", "unknown species 'olec acid'; close matches: oleic (C18:1)"),
        ("palmitc", "unknown species 'palmitc'; close matches: palmitic (C16:0)"),
        ("xyz", "unknown species 'xyz'; no close match in the species table"),
        ("C18:7", "unknown species 'C18:7'; no close match in the species table"),
        ("", "unknown species ''; no close match in the species table"),
        ("C18:1 foo",
         "unknown species 'C18:1 foo'; close matches: C18:1, C18:1t, C18:1OH, C18:1n12"),
        ("C18:1+C18:2",
         "unknown species 'C18:1+C18:2'; close matches: C18:1, C18:1t, C18:1OH, C18:1n12"),
    ],
)
def test_unknown_species_message_names_close_matches(notation: str, message: str) -> None:
    with pytest.raises(UnknownSpeciesError) as caught:
        canonical_species(notation)
    assert str(caught.value) == message


@pytest.mark.parametrize(
    ("notation", "message"),
    [
        (
            "C18:2 trans",
            "unknown species 'C18:2 trans': the species table has no trans isomer of C18:2",
        ),
        (
            "C18:2n6t",
            "unknown species 'C18:2n6t': the species table has no trans isomer of C18:2",
        ),
        (
            "C18:2 9c,11t",  # conjugated linoleic: no row of its own
            "unknown species 'C18:2 9c,11t': the species table has no conjugated isomer of C18:2",
        ),
        (
            "C16:1 trans-9",
            "unknown species 'C16:1 trans-9': the species table has no trans isomer of C16:1",
        ),
    ],
)
def test_trans_mark_without_trans_row_is_an_error(notation: str, message: str) -> None:
    with pytest.raises(UnknownSpeciesError) as caught:
        canonical_species(notation)
    assert str(caught.value) == message


@pytest.mark.parametrize(
    ("notation", "message"),
    [
        (
            "C18:0 12-OH",
            "unknown species 'C18:0 12-OH': the species table has no hydroxy isomer of C18:0",
        ),
        (
            "C18:1 cis-9,12",
            "unknown species 'C18:1 cis-9,12': too many double-bond positions for C18:1: 9, 12",
        ),
        (
            "C18:3 n-3 cis-6,9,12",
            "unknown species 'C18:3 n-3 cis-6,9,12': "
            "n-3 contradicts double-bond positions 6, 9, 12 of C18:3",
        ),
        (
            "C18:1 Δ20",
            "unknown species 'C18:1 Δ20': double-bond position 20 does not fit C18:1",
        ),
        ("C16:0 n-9", "unknown species 'C16:0 n-9': n-9 given for saturated C16:0"),
        (
            "Palmitic acid (C18:1)",
            "unknown species 'Palmitic acid (C18:1)': "
            "its parts name different species, C16:0 and C18:1",
        ),
    ],
)
def test_inconsistent_notation_is_an_error_that_says_why(notation: str, message: str) -> None:
    with pytest.raises(UnknownSpeciesError) as caught:
        canonical_species(notation)
    assert str(caught.value) == message


def test_unknown_species_error_is_a_key_error() -> None:
    with pytest.raises(KeyError):
        canonical_species("C19:0")


def test_non_text_name_is_an_unknown_species_error() -> None:
    with pytest.raises(UnknownSpeciesError) as caught:
        canonical_species(18.1)  # type: ignore[arg-type]
    assert str(caught.value) == "unknown species 18.1; a species name must be text"


# --- is_species_like ----------------------------------------------------------------------


@pytest.mark.parametrize(
    "header",
    [
        "C18:1",
        "C19:0",  # unknown, but a lipid number
        "18:2",
        "C18:1_wt_pct",
        "C16:0 (%)",
        "oleic",
        "methyl oleate",
        "EPA",
        "nonadecanoic acid",
        "vernolic acid",
        "methyl vernolate",
        "others",
        "unidentified",
    ],
)
def test_species_header_is_species_like(header: str) -> None:
    assert is_species_like(header)


@pytest.mark.parametrize(
    "header",
    [
        "supplier",
        "price_per_t",
        "ffa_wt_pct",
        "feedstock",
        "cetane_number",
        "notes",
        "sample",
        "lot",
        "cloud_point_C",
        "cfpp_C",
        "density_15C_kg_m3",
        "kinematic_viscosity_40C_mm2_s",
        "acid_value_mg_KOH_g",
        "iodine_value_g_I2_100g",
        "oxidation_stability_h",
        "methyl_ester_content_wt_pct",
        "water_mg_kg",
        "citric_acid_ppm",
        "total",
        "SFA",
        "PUFA",
        "",
    ],
)
def test_metadata_and_property_header_is_not_species_like(header: str) -> None:
    assert not is_species_like(header)


# --- properties ---------------------------------------------------------------------------

_SPACES = st.sampled_from(["", " ", "  ", "\t", "\u00a0"])
_SEPARATORS = st.sampled_from([" ", "  ", "_", "-", "\u00a0", "\u2013", " - "])


def _random_case(draw: st.DrawFn, text: str) -> str:
    flips = draw(st.lists(st.booleans(), min_size=len(text), max_size=len(text)))
    return "".join(ch.swapcase() if flip else ch for ch, flip in zip(text, flips, strict=True))


@st.composite
def _key_variant(draw: st.DrawFn) -> tuple[str, str]:
    """A species key with random case and whitespace between its parts ('C 18 : 1 OH')."""
    key = draw(st.sampled_from(KEYS))
    parts = re.findall(r"C|\d+|:|[A-Za-z]+\d*", key)
    text = parts[0]
    for part in parts[1:]:
        text += draw(_SPACES) + part
    return draw(_SPACES) + _random_case(draw, text) + draw(_SPACES), key


@st.composite
def _name_variant(draw: st.DrawFn) -> tuple[str, str]:
    """A common name or methyl ester name with random case and separators."""
    key = draw(st.sampled_from(KEYS))
    name = TABLE.loc[key, draw(st.sampled_from(["common_name", "fame_name"]))]
    words = re.split(r"[\s\-]+", name)
    text = words[0]
    for word in words[1:]:
        text += draw(_SEPARATORS) + word
    return draw(_SPACES) + _random_case(draw, text) + draw(_SPACES), key


@given(st.sampled_from(KEYS))
def test_every_key_round_trips(key: str) -> None:
    assert canonical_species(key) == key


@given(_key_variant())
def test_case_and_space_variants_of_keys_map_to_the_key(case: tuple[str, str]) -> None:
    text, key = case
    assert canonical_species(text) == key


@given(_name_variant())
def test_case_and_space_variants_of_names_map_to_the_key(case: tuple[str, str]) -> None:
    text, key = case
    assert canonical_species(text) == key


@given(st.sampled_from(KEYS))
def test_methyl_ester_of_common_name_maps_to_the_key(key: str) -> None:
    common = TABLE.loc[key, "common_name"]
    assert canonical_species(f"{common} acid methyl ester") == key


@given(
    st.one_of(
        st.text(max_size=30),
        st.from_regex(r"\A[Cc]? ?\d{1,2}:\d{1,2}[ a-z0-9,()\-]{0,12}\Z"),
    )
)
def test_any_text_gives_a_key_or_a_one_line_unknown_species_error(text: str) -> None:
    try:
        key = canonical_species(text)
    except UnknownSpeciesError as error:
        assert "\n" not in str(error)
        assert str(error).startswith("unknown species ")
    else:
        assert key in KEYS or key == OTHER
        assert canonical_species(text) == key  # deterministic


def test_lookup_tables_are_not_built_at_import_time() -> None:
    code = (
        "import estimator.profiles.names, estimator.tables as t; "
        "print(t.species_table.cache_info().currsize)"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "0"


ISOMER_ROWS = [
    # isomers with rows of their own (issue 9 point 5): notations as GC reports write them
    ("petroselinic", "C18:1n12"),  # cis-6-octadecenoic, coriander; common practice
    ("methyl petroselinate", "C18:1n12"),
    ("C18:1 cis-6", "C18:1n12"),
    ("18:1n-12", "C18:1n12"),  # n = 18 - 6
    ("C18:1 Δ6", "C18:1n12"),
    ("C18:1 n-9", "C18:1"),  # oleic stays oleic
    ("elaidic", "C18:1t"),
    ("C18:1t", "C18:1t"),
    ("C18:1 trans-9", "C18:1t"),
    ("eleostearic", "C18:3conj"),  # tung oil; common practice
    ("alpha-eleostearic acid", "C18:3conj"),
    ("C18:3 conj", "C18:3conj"),
    ("C18:3 conjugated", "C18:3conj"),
    ("C18:3 9c,11t,13t", "C18:3conj"),  # positions two apart: conjugated whatever the marks
    ("C18:3 n-3", "C18:3"),
    ("ricinoleic", "C18:1OH"),
    ("C18:1OH", "C18:1OH"),
]


@pytest.mark.parametrize(("notation", "key"), ISOMER_ROWS)
def test_isomer_notation_maps_to_its_own_species_row(notation: str, key: str) -> None:
    assert canonical_species(notation) == key


def test_conjugated_mark_on_a_chain_without_a_conjugated_row_is_an_error() -> None:
    with pytest.raises(UnknownSpeciesError) as err:
        canonical_species("C18:2 conj")
    assert str(err.value) == ("unknown species 'C18:2 conj': the species table has no "
                              "conjugated isomer of C18:2")
