"""The executor's locals (``execute.state.Env``): the same mapping and order as the pairs it replaced
(a rebound name moves to the end), old paths unchanged by later bindings, and a long straight-line
function read end to end."""
from __future__ import annotations

import random

from verifier.claims import extract
from verifier.claims.execute.state import Env, State
from verifier.model.expr import Num, Var


def reference_bind(pairs: tuple, name: str, value: object) -> tuple:
    """The former definition: drop the old binding, append the new one."""
    return tuple((k, v) for k, v in pairs if k != name) + ((name, value),)


def test_env_matches_the_pairs_it_replaced_and_keeps_old_paths_intact() -> None:
    rng = random.Random(14)
    state, pairs = State(()), ()
    history: list[tuple[State, tuple]] = []
    for step in range(3000):
        name = f"v{rng.randrange(400)}"
        state, pairs = state.bind(name, Num(step)), reference_bind(pairs, name, Num(step))
        if step % 97 == 0:
            history.append((state, pairs))
    assert list(state.env) == list(pairs)
    for old_state, old_pairs in history:  # a branch point saved earlier still sees its own locals
        assert list(old_state.env) == list(old_pairs)
        assert all(old_state.get(k) == v for k, v in old_pairs)
    assert state.get("absent") is None
    assert State(pairs).env == state.env and hash(State(pairs).env) == hash(state.env)
    assert len(Env([("a", Var("a")), ("b", Num(1)), ("a", Num(2))])) == 2


def test_a_straight_line_function_of_many_locals_is_read(tmp_path) -> None:
    count = 1500
    lines = [f"# idealcheck: returns {count - 1}*x + y", "def kernel(x, y):"]
    lines += [f"    t{i} = {i}*x + y" for i in range(count)]
    lines.append(f"    return t{count - 1}")
    claims = extract("kernel.py", "\n".join(lines) + "\n")
    assert len(claims) == 1 and claims[0].problem is None and claims[0].obligations
