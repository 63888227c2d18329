"""Fuzzed site files: every one is a valid study or a one-line error naming the field, never a traceback.

Hypothesis mutates a valid site document (deletes keys, adds unknown ones, puts wrong types, NaN,
infinities, huge and negative numbers, odd Unicode in its place), breaks its TOML text, or feeds
bytes that are not UTF-8, through the library loader and through the command line. In CI (``CI``
set) the library run takes 2,000 examples and the command line 300; elsewhere fewer.
"""

import copy
import os
import re
import tomllib

import pytest
import toml_writer
from click.testing import CliRunner
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from tests_support import BASE_SITE

from cli.main import main
from geo.errors import SiteFileError, TerrainError
from geo.site.site_file import load_site, parse_site
from geo.study.site_study import run_study

# The shared test site with notes and a runway code, so that those fields are fuzzed too.
BASE_TEXT = BASE_SITE.replace('name = "Test strip"', 'name = "Test strip"\nnotes = "base"').replace(
    "width = 45", "width = 45\ncode = 4"
)
BASE = tomllib.loads(BASE_TEXT)
CI = bool(os.environ.get("CI"))
LIBRARY_EXAMPLES = 2000 if CI else 150
CLI_EXAMPLES = 300 if CI else 30


def _paths(doc, prefix=()):
    for k, v in doc.items():
        yield prefix + (k,)
        if isinstance(v, dict):
            yield from _paths(v, prefix + (k,))


PATHS = list(_paths(BASE))
ODD_TEXT = st.text(alphabet=st.characters(blacklist_categories=("Cs",)), max_size=30)
NUMBERS = st.one_of(
    st.floats(allow_nan=True, allow_infinity=True),
    st.integers(min_value=-(2**63), max_value=2**63 - 1),
    st.sampled_from([0, -1, 1e308, -1e308, 1e-300, 90.0000001, -180.5, 0.0, 2.5, 3.5, 6.0, 335.4, 328.6]),
)
VALUES = st.one_of(
    NUMBERS,
    st.booleans(),
    ODD_TEXT,
    st.lists(NUMBERS, max_size=3),
    st.dictionaries(ODD_TEXT, NUMBERS, max_size=2),
    st.sampled_from(["left", "right", "sideband-reference", "capture-effect", "ft", "m", "III"]),
)
MUTATION = st.tuples(st.sampled_from(["delete", "replace", "add"]), st.sampled_from(PATHS), VALUES, ODD_TEXT)


def _mutate(doc, mutations):
    doc = copy.deepcopy(doc)
    for action, path, value, new_key in mutations:
        node = doc
        for key in path[:-1]:
            node = node.get(key) if isinstance(node, dict) else None
            if not isinstance(node, dict):
                break
        if not isinstance(node, dict):
            continue
        if action == "delete":
            node.pop(path[-1], None)
        elif action == "replace":
            node[path[-1]] = value
        else:
            node[new_key or "extra"] = value
    return doc


def _one_line_error(exc) -> None:
    message = str(exc)
    assert message and "\n" not in message and "Traceback" not in message


def _study_or_error(path) -> None:
    try:
        run_study(load_site(path))
    except (SiteFileError, TerrainError) as exc:
        _one_line_error(exc)


FUZZ = settings(
    max_examples=LIBRARY_EXAMPLES,
    deadline=None,
    derandomize=CI,
    suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture],
)


@FUZZ
@given(st.lists(MUTATION, min_size=1, max_size=3))
def test_mutated_documents_through_the_library(tmp_path, mutations):
    doc = _mutate(BASE, mutations)
    path = tmp_path / "fuzz.toml"
    path.write_text(toml_writer.dumps(doc), encoding="utf-8")
    _study_or_error(path)


@settings(
    max_examples=max(LIBRARY_EXAMPLES // 4, 50),
    deadline=None,
    derandomize=CI,
    suppress_health_check=[HealthCheck.function_scoped_fixture],
)
@given(st.integers(min_value=0, max_value=len(BASE_TEXT)), st.text(max_size=8), st.integers(0, 20))
def test_broken_toml_text(tmp_path, position, insert, cut):
    text = BASE_TEXT[:position] + insert + BASE_TEXT[position + cut :]
    path = tmp_path / "broken.toml"
    path.write_bytes(text.encode("utf-8", "surrogatepass"))
    _study_or_error(path)


@settings(max_examples=50, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(st.binary(max_size=200))
def test_arbitrary_bytes(tmp_path, data):
    path = tmp_path / "bytes.toml"
    path.write_bytes(data)
    _study_or_error(path)


@settings(
    max_examples=CLI_EXAMPLES,
    deadline=None,
    derandomize=CI,
    suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture],
)
@given(st.lists(MUTATION, min_size=1, max_size=3))
def test_mutated_documents_through_the_command_line(tmp_path_factory, mutations):
    folder = tmp_path_factory.mktemp("cli")
    path = folder / "fuzz.toml"
    path.write_text(toml_writer.dumps(_mutate(BASE, mutations)), encoding="utf-8")
    res = CliRunner().invoke(main, ["run", str(path), "--out", str(folder / "out"), "--no-plots", "-q"])
    assert res.exit_code in (0, 2), res.output
    if res.exit_code == 2:
        lines = res.output.strip().splitlines()
        assert len(lines) == 1 and "Traceback" not in res.output
        assert re.match(r"mastplan: error: .+: \S+", lines[0])
    else:
        assert (folder / "out" / "summary.json").exists()


def test_parse_rejects_a_non_table_document():
    with pytest.raises(SiteFileError):
        parse_site(["not", "a", "table"])
