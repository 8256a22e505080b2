"""Deep trees end to end: a 3,000-statement accumulation chain and a 1,500-term `returns` claim.

Both build left-leaning trees thousands of levels deep (the claim parser, the executor, hashing,
pickling to a worker and the cache all meet them); with recursion anywhere they end as "nested too
deeply".  The identities are textbook algebra (common practice): a sum of c*p_k regrouped by k, and the
terms of a product of two sums listed one by one; each wrong variant drops or alters one term, so it
is false.
"""
from __future__ import annotations

import json
import pickle
from pathlib import Path
from typing import TYPE_CHECKING

from conftest import write_file

from verifier.claims.language import parse_expression
from verifier.model.expr import BinOp, Var

if TYPE_CHECKING:
    from conftest import Cli

STEPS = 3000
KINDS = 10
TERMS = 1500
ROWS = 30


def _chain(claim: str) -> str:
    lines = [f"# idealcheck: returns {claim}", "def accumulate(acc0, c, " + ", ".join(f"p{k}" for k in range(KINDS)) + "):",
             "    acc = acc0"]
    lines += [f"    acc = acc + c*p{i % KINDS}" for i in range(STEPS)]
    return "\n".join(lines + ["    return acc"]) + "\n"


def _terms(claim_terms: list[str]) -> str:
    pairs = [(i % ROWS, i // ROWS) for i in range(TERMS)]
    params = [f"a{i}" for i in range(ROWS)] + [f"b{j}" for j in range(TERMS // ROWS)]
    lines = ["# idealcheck: returns " + " + ".join(claim_terms), f"def dot({', '.join(params)}):", "    s = 0"]
    lines += [f"    s = s + b{j}*a{i}" for i, j in pairs]
    return "\n".join(lines + ["    return s"]) + "\n"


def test_deep_chains_are_decided_through_the_command_line(cli: Cli, tmp_path: Path) -> None:
    regrouped = f"acc0 + {STEPS // KINDS}*c*(" + " + ".join(f"p{k}" for k in range(KINDS)) + ")"
    write_file(tmp_path, "chain.py", _chain(regrouped))
    write_file(tmp_path, "chain_slip.py", _chain(regrouped.replace("p9", "p8")))
    terms = [f"a{i % ROWS}*b{i // ROWS}" for i in range(TERMS)]
    write_file(tmp_path, "terms.py", _terms(terms))
    write_file(tmp_path, "terms_slip.py", _terms(terms[:-1] + ["2*" + terms[-1]]))
    result = cli("check", "--no-cache", "--timeout", "120", "--format", "json", ".", cwd=tmp_path)
    verdicts = {c["path"]: c["verdict"] for c in json.loads(result.out)["claims"]}
    assert verdicts == {"chain.py": "proved", "chain_slip.py": "refuted",
                        "terms.py": "proved", "terms_slip.py": "refuted"}, result.out[:2000]


def test_a_long_claim_parses_into_the_tree_python_builds() -> None:
    """Python's grammar (common practice): + and - join left to right, * before +."""
    tree = parse_expression(" + ".join(f"x{i}*y" for i in range(5000)) + " - z")
    assert isinstance(tree, BinOp) and tree.op == "-" and tree.right == Var("z")
    depth, node = 0, tree.left
    while isinstance(node, BinOp) and node.op == "+":
        assert node.right == BinOp("*", Var(f"x{4999 - depth}"), Var("y"))
        depth, node = depth + 1, node.left
    assert depth == 4999 and node == BinOp("*", Var("x0"), Var("y"))
    copy = pickle.loads(pickle.dumps(tree))
    assert copy == tree and hash(copy) == hash(tree) and copy is not tree
