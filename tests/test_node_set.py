"""`NodeSet` (a set of variables kept as marks over the graph's index) must
answer every question exactly as the frozenset of the same names does: the
verdict of `check` holds its large sets this way. The oracle is Python's own
frozenset, operation by operation."""

from __future__ import annotations

import subprocess
import sys

import networkx as nx
import pytest
from dagward.causal.indexed import NodeSet, indexed
from helpers.examples import examples
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

NAMES = [f"v{i}" for i in range(12)]
IX = indexed(nx.freeze(nx.DiGraph([(NAMES[i], NAMES[i + 1]) for i in range(len(NAMES) - 1)])))
subsets = st.frozensets(st.sampled_from(NAMES))
others = st.frozensets(st.sampled_from([*NAMES, "not-a-variable"]))
SETTINGS = settings(
    max_examples=examples(300), deadline=None, suppress_health_check=list(HealthCheck)
)


def marks(names: frozenset[str]) -> NodeSet:
    return NodeSet(IX, IX.mask(names))


@SETTINGS
@given(subsets, subsets, others)
def test_node_sets_answer_as_frozensets(a, b, c):
    A, B = marks(a), marks(b)
    assert A == a and a == A and hash(A) == hash(a)
    assert len(A) == len(a) and bool(A) == bool(a)
    assert sorted(A) == sorted(a) and list(A) == sorted(a, key=NAMES.index)
    assert all((v in A) == (v in a) for v in [*NAMES, "not-a-variable", 3])
    for other, plain in ((B, b), (c, c)):
        assert A - other == a - plain
        assert plain - A == plain - a
        assert A & other == a & plain and other & A == plain & a
        assert A | other == a | plain and other | A == plain | a
        assert A ^ other == a ^ plain
        assert A.isdisjoint(other) == a.isdisjoint(plain)
        assert A.issubset(other) == a.issubset(plain)
        assert A.issuperset(other) == a.issuperset(plain)
        assert (A <= other) == (a <= plain) and (A >= other) == (a >= plain)
        assert (A < other) == (a < plain) and (A > other) == (a > plain)
        assert (A == other) == (a == plain) and (A != other) == (a != plain)
    assert (A - B) == a - b and type(A - B) is NodeSet  # marks stay marks
    assert A.union(b, c) == a.union(b, c) and A.intersection(b) == a.intersection(b)
    assert A.difference(b, c) == a.difference(b, c)
    assert IX.ids(A) == sorted(IX.index[v] for v in a)
    assert IX.mask(A) == IX.mask(a)


def test_a_node_set_is_a_dictionary_key_equal_to_its_frozenset():
    a = frozenset(NAMES[:5])
    assert {marks(a): 1}[a] == 1 and {a: 2}[marks(a)] == 2


@pytest.mark.parametrize("text", ["a -> b\nb -> c\nanalysis {\n exposure: a\n outcome: c\n}\n"])
def test_check_of_an_acyclic_diagram_never_imports_networkx(tmp_path, text):
    # networkx's import alone costs about 15 MB, more than the index of a
    # 10,000-variable diagram; only a diagram with a cycle needs it (to name it).
    path = tmp_path / "d.dag"
    path.write_text(text)
    code = (
        "import sys\nfrom dagward.cli import main\n"
        f"code = main(['check', {str(path)!r}])\n"
        "assert 'networkx' not in sys.modules, 'networkx was imported'\n"
        "print('exit', code)\n"
    )
    run = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    assert run.returncode == 0, run.stderr
    assert "exit 0" in run.stdout
    path.write_text("a -> b\nb -> a\n")
    cyclic = code.replace("assert 'networkx' not in", "assert 'networkx' in")
    run = subprocess.run([sys.executable, "-c", cyclic], capture_output=True, text=True)
    assert run.returncode == 0, run.stderr
    assert "exit 1" in run.stdout
