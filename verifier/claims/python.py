"""Python files: function claims (``same as``, ``returns``) and statement claims (``== EXPR``).

Plain ``LEFT == RIGHT`` comments go to the expression reader like in any file.  The other forms are tied
to the code: a function claim sits in the comment lines directly above a ``def`` (decorators may sit in
between), a statement claim trails an assignment, augmented or annotated assignment, or a return.  The
code is read with libcst, lowered to the kernel IR by ``verifier.claims.frontends.python`` and executed
symbolically by ``verifier.claims.execute``; it is never imported or run.
"""
from __future__ import annotations

import ast
import re
from collections.abc import Callable, Sequence
from dataclasses import dataclass, replace

import libcst as cst

from verifier.claims.comments import CommentClaim
from verifier.claims.expression import error_claim, expression_claims
from verifier.claims.expr_parser import Nested
from verifier.claims.language import ClaimSyntaxError, ParsedClaim, parse_claim_text
from verifier.claims.execute import NONE, Executor, Outcome, Seq, State, Status, Value, first_unknown
from verifier.claims.execute.values import Record
from verifier.claims.frontends.python.modules import (
    FunctionRef,
    MemberImport,
    ModuleImport,
    ModuleInfo,
    ModuleLoader,
    parse_module_text,
)
from verifier.claims.frontends.python.receiver import method_receiver
from verifier.claims.frontends.python.scope import PythonScope
from verifier.claims.obligations import (
    MAX_OBLIGATIONS,
    ClaimProblem,
    path_components,
    contains_none,
    obligation,
    path_label,
    unique,
)
from verifier.claims.parameter_functions import with_particular_functions
from verifier.claims.sequence_parameters import parameter_shapes, sequence_arguments
from verifier.claims.substitution import ConstantLookup, substitute, substitute_condition
from verifier.model.claim import (
    Claim,
    ClaimKind,
    ExtractionContext,
    Location,
    Obligation,
    Problem,
)
from verifier.model import ir
from verifier.model.expr import PI, BinOp, Call, Expr, Neg, Opaque, Pow, Var

@dataclass(frozen=True)
class _StatementSite:
    node: cst.CSTNode  # the small statement (Assign, AugAssign, AnnAssign, Return)
    function: FunctionRef | None
    line: int
    loops: tuple[tuple[int, int], ...]  # line ranges of the for loops around it


def _replace_pi(expr: Expr) -> Expr:
    if expr == PI:
        return Var("pi")
    if isinstance(expr, BinOp):
        return BinOp(expr.op, _replace_pi(expr.left), _replace_pi(expr.right))
    if isinstance(expr, Neg):
        return Neg(_replace_pi(expr.operand))
    if isinstance(expr, Pow):
        return Pow(_replace_pi(expr.base), expr.exponent)
    if isinstance(expr, Call):
        return Call(expr.function, tuple(_replace_pi(a) for a in expr.args))
    if isinstance(expr, Opaque):
        return Opaque(expr.name, tuple(_replace_pi(a) for a in expr.args))
    return expr


def _pi_as_variable(parsed: ParsedClaim) -> ParsedClaim:
    """The claim with ``pi`` read as the program's own variable of that name rather than the number."""
    return replace(
        parsed,
        sides=tuple(_replace_pi(side) for side in parsed.sides),
        nested=tuple(_map_nested(item, _replace_pi) for item in parsed.nested),
        conditions=tuple(replace(c, left=_replace_pi(c.left), right=_replace_pi(c.right))
                         for c in parsed.conditions),
    )


def extract_python(path: str, text: str, comments: list[CommentClaim], context: ExtractionContext) -> list[Claim]:
    """Every claim of the Python file ``path`` (content ``text``) from its ``idealcheck:`` comments."""
    per_comment: list[list[Claim]] = [[] for _ in comments]
    pending: list[tuple[int, CommentClaim, ParsedClaim]] = []
    for index, comment in enumerate(comments):
        try:
            parsed = parse_claim_text(comment.text, context)
        except ClaimSyntaxError as error:
            kind: ClaimKind = "statement" if comment.text.lstrip().startswith("==") else "expression"
            if re.match(r"\s*(same\s+as|returns)\b", comment.text):
                kind = "function"
            per_comment[index] = [error_claim(comment, path, error, kind)]
            continue
        if parsed.form == "equation":
            per_comment[index] = expression_claims(comment, path, context)
        else:
            pending.append((index, comment, parsed))
    if pending:
        try:
            module = parse_module_text(path, text)
        except cst.ParserSyntaxError as exc:
            line, column, reason = _syntax_error_place(text, exc)
            message = f"cannot parse Python: {reason} (line {line}, column {column})"
            first = pending[0]
            per_comment[first[0]] = [_file_error(path, line, column, message, _kind_of(first[2]))]
            pending = []
        except RecursionError:
            first = pending[0]
            per_comment[first[0]] = [_file_error(path, 1, 1, "cannot parse Python: the file is nested too deeply",
                                                 _kind_of(first[2]))]
            pending = []
        else:
            reader = _FileReader(path, text, module, context)
            for index, comment, parsed in pending:
                per_comment[index] = [reader.claim(comment, parsed)]
    return [claim for claims in per_comment for claim in claims]


def _syntax_error_place(text: str, exc: cst.ParserSyntaxError) -> tuple[int, int, str]:
    """Where and why the file does not parse; Python's own parser (parse only) names the place best."""
    try:
        ast.parse(text)
    except SyntaxError as error:
        if error.lineno:
            return error.lineno, max(1, error.offset or 1), error.msg
    except (ValueError, RecursionError, MemoryError):
        pass
    return exc.raw_line, exc.raw_column + 1, exc.message


def _kind_of(parsed: ParsedClaim) -> ClaimKind:
    return "statement" if parsed.form == "statement" else "function"


def _file_error(path: str, line: int, column: int, message: str, kind: ClaimKind) -> Claim:
    return Claim(id=f"{path}:{line}:{column}", location=Location(path, line, column), kind=kind,
                 text="(the Python file could not be parsed)", problem=Problem("error", message),
                 dependencies=(path,))


class _FileReader:
    """One parsed file: finds the code each claim is about and turns it into obligations."""

    def __init__(self, path: str, text: str, module: ModuleInfo, context: ExtractionContext):
        self.path = path
        self.lines = text.splitlines()
        self.module = module
        self.context = context
        self.loader = ModuleLoader(context.roots)
        self.loader.add(module)
        self.defs_by_line: dict[int, FunctionRef] = {}
        self.sites: list[_StatementSite] = []
        self._index()
        self._visits_cache: dict[tuple[str, str], tuple[Executor, PythonScope, list[Outcome]]] = {}

    # -- indexing the file

    def _index(self) -> None:
        reader = self

        class Visitor(cst.CSTVisitor):
            def __init__(self) -> None:
                self.functions: list[FunctionRef] = []
                self.classes: list[str] = []
                self.loops: list[tuple[int, int]] = []

            def visit_ClassDef(self, node: cst.ClassDef) -> None:
                self.classes.append(node.name.value)

            def leave_ClassDef(self, node: cst.ClassDef) -> None:
                self.classes.pop()

            def visit_FunctionDef(self, node: cst.FunctionDef) -> None:
                outer = self.functions[-1].qualname + ".<locals>." if self.functions else ""
                cls = self.classes[-1] if self.classes and not self.functions else None
                qualname = outer + (f"{cls}." if cls else "") + node.name.value
                ref = FunctionRef(reader.module, node, qualname, cls)
                self.functions.append(ref)
                first = node.decorators[0] if node.decorators else node
                reader.defs_by_line[reader.module.line(first)] = ref
                self.saved_loops = getattr(self, "saved_loops", []) + [self.loops]
                self.loops = []

            def leave_FunctionDef(self, node: cst.FunctionDef) -> None:
                self.functions.pop()
                self.loops = self.saved_loops.pop()

            def visit_For(self, node: cst.For) -> None:
                pos = reader.module.positions.get(node)
                if pos is not None:
                    self.loops.append((pos.start.line, pos.end.line))

            def leave_For(self, node: cst.For) -> None:
                if reader.module.positions.get(node) is not None:
                    self.loops.pop()

            def visit_SimpleStatementLine(self, node: cst.SimpleStatementLine) -> None:
                self._smalls(node.body)

            def visit_SimpleStatementSuite(self, node: cst.SimpleStatementSuite) -> None:
                self._smalls(node.body)

            def _smalls(self, body: Sequence[cst.BaseSmallStatement]) -> None:
                function = self.functions[-1] if self.functions else None
                for small in body:
                    reader.sites.append(_StatementSite(small, function, reader.module.line(small), tuple(self.loops)))

        self.module.module.visit(Visitor())

    def _site_for(self, line: int) -> _StatementSite | None:
        best: _StatementSite | None = None
        for site in self.sites:
            pos = self.module.positions.get(site.node)
            if pos is None or not pos.start.line <= line <= pos.end.line:
                continue
            if best is None or self.module.positions[best.node].start.line <= pos.start.line:
                best = site
        return best

    def _def_below(self, comment: CommentClaim) -> FunctionRef | None:
        if comment.subject_line is not None:  # a docstring claim: about the function that holds it
            return self.defs_by_line.get(comment.subject_line)
        number = comment.end_line + 1
        while number <= len(self.lines) and self.lines[number - 1].lstrip().startswith("#"):
            number += 1
        return self.defs_by_line.get(number)

    # -- claims

    def claim(self, comment: CommentClaim, parsed: ParsedClaim) -> Claim:
        kind = _kind_of(parsed)
        location = Location(self.path, comment.line, comment.column)
        claim_id = f"{self.path}:{comment.line}:{comment.column}"
        try:
            if parsed.form == "statement":
                obligations, notes, dependencies = self._statement(comment, parsed)
            else:
                obligations, notes, dependencies = self._function(comment, parsed)
        except ClaimProblem as problem:
            return Claim(claim_id, location, kind, comment.text,
                         problem=Problem(problem.verdict, problem.message),  # type: ignore[arg-type]
                         dependencies=(self.path,))
        except RecursionError:
            return Claim(claim_id, location, kind, comment.text,
                         problem=Problem("inconclusive", "the code is nested too deeply to follow"),
                         dependencies=(self.path,))
        deps = tuple(dict.fromkeys([self.path] + dependencies))
        return Claim(claim_id, location, kind, comment.text, tuple(obligations), None, tuple(notes), deps)

    def _executor(self, marks: frozenset[tuple[int, int]] = frozenset()) -> tuple[Executor, PythonScope]:
        scope = PythonScope(self.loader)
        executor = Executor(scope, unroll_limit=self.context.unroll_limit, inline_depth=self.context.inline_depth,
                            marks=marks)
        return executor, scope

    # -- function claims

    def _function(self, comment: CommentClaim, parsed: ParsedClaim
                  ) -> tuple[list[Obligation], list[str], list[str]]:
        form = "`same as`" if parsed.form == "same_as" else "`returns`"
        ref = None if comment.trailing else self._def_below(comment)
        if ref is None:
            raise ClaimProblem("error", f"a {form} claim must be in the comment lines directly above a `def` "
                                         "(decorators may sit in between); none follows this comment")
        name = ref.node.name.value
        executor, scope = self._executor()
        lowered = _lowered(scope, ref)
        other = None
        if parsed.form == "same_as":
            other = self._find_function(parsed.other or "", self.module, 0, executor)
        others = [] if other is None else [_lowered(scope, other)]
        shapes, shape_notes = parameter_shapes(parsed, lowered, others)
        bindings, receiver_note = method_receiver(executor, scope, ref)
        outcomes = executor.run_function(lowered, shapes=shapes, bindings=bindings)
        paths = self._returned(outcomes, name)
        for note in shape_notes + ([receiver_note] if receiver_note else []):
            paths = [(state.with_note(note), value) for state, value in paths]
        obligations: list[Obligation] = []
        if "pi" in ref.positional_names():
            parsed = _pi_as_variable(parsed)  # a parameter named pi: the claim's pi is that parameter
        if parsed.form == "returns":
            # EXPR is in the parameters; a module-level constant it names means that constant's value
            params = State(tuple((p, bindings.get(p, Var(p))) for p in ref.positional_names()))
            constant = _constant_lookup(executor, scope, ref.module)
            target = _target_value(parsed, lambda side: substitute(side, params, constant))
            unknown = first_unknown(target)
            if unknown is not None:
                raise ClaimProblem("inconclusive", f"the claim's expression cannot be followed: {unknown.reason}")
            given = tuple(substitute_condition(c, params, constant) for c in parsed.conditions)
            for state, value in paths:
                for left, right, label in path_components(value, target, name, "the claim", state.conditions):
                    obligations.append(obligation(left, right, given, state.conditions, label, state.notes))
        else:
            other_name = parsed.other or ""
            if other is None:
                raise ClaimProblem("error", f"cannot find the function `{other_name}` among the functions and "
                                             f"imports of {self.path}")
            mine = ref.positional_names()
            theirs = other.positional_names()
            if len(mine) != len(theirs):
                raise ClaimProblem("error", f"{name} takes {len(mine)} positional arguments, {other_name} takes "
                                             f"{len(theirs)}: `same as` compares them for the same arguments")
            arguments = sequence_arguments(mine, shapes, executor)
            if bindings and other.class_name == ref.class_name and other.module is ref.module:
                arguments = [bindings[mine[0]]] + list(arguments[1:])  # two methods of one object
            other_outcomes = executor.run_function(others[0], args=arguments)
            other_paths = self._returned(other_outcomes, other_name)
            for state, value in paths:
                for other_state, other_value in other_paths:
                    conditions = state.conditions + tuple(c for c in other_state.conditions
                                                          if c not in state.conditions)
                    notes = state.notes + tuple(n for n in other_state.notes if n not in state.notes)
                    for left, right, label in path_components(value, other_value, name, other_name, conditions):
                        obligations.append(obligation(left, right, parsed.conditions, conditions, label, notes))
                        if len(obligations) > MAX_OBLIGATIONS:
                            raise ClaimProblem("inconclusive", f"more than {MAX_OBLIGATIONS} path obligations")
        obligations = with_particular_functions(unique(obligations))
        if len(obligations) > MAX_OBLIGATIONS:
            raise ClaimProblem("inconclusive", f"more than {MAX_OBLIGATIONS} path obligations")
        claim_notes = list(executor.inlined) + list(dict.fromkeys(n for ob in obligations for n in ob.notes))
        return obligations, claim_notes, executor.dependencies

    def _returned(self, outcomes: list[Outcome], name: str) -> list[tuple[State, Value]]:
        stuck = [o for o in outcomes if o.status is Status.STUCK]
        if stuck:
            first = min(stuck, key=lambda o: o.line)
            raise ClaimProblem("inconclusive", f"{first.reason} (in {name})" if name not in first.reason
                                else first.reason)
        paths: list[tuple[State, Value]] = []
        for outcome in outcomes:
            if outcome.status is Status.RETURN:
                paths.append((outcome.state, outcome.value if outcome.value is not None else NONE))
            elif outcome.status is Status.NEXT:
                paths.append((outcome.state, NONE))
        if not paths:
            raise ClaimProblem("inconclusive", f"{name} never returns a value: every path raises")
        for state, value in paths:
            unknown = first_unknown(value)
            if unknown is not None:
                raise ClaimProblem("inconclusive", f"{name} returns a value the tool cannot follow: "
                                                    f"{unknown.reason}")
            if isinstance(value, Record):
                raise ClaimProblem("inconclusive", f"{name} returns a {value.class_name} object, not a number")
            if contains_none(value) and not state.conditions:  # on a branch: that branch must be impossible
                raise ClaimProblem("inconclusive", f"{name} returns None on a path (no return statement "
                                                    "or `return None`), which is not a number")
        return paths

    def _find_function(self, dotted: str, module: ModuleInfo, depth: int, executor: Executor) -> FunctionRef | None:
        if depth > 8:
            return None
        head, _, rest = dotted.partition(".")
        if not rest:
            if head in module.functions:
                return FunctionRef(module, module.functions[head], head)
            member = module.imports.get(head)
            if isinstance(member, MemberImport):
                other = self.loader.find(member.dotted, module)
                if other is not None:
                    executor.depend(other.path)
                    return self._find_function(member.name, other, depth + 1, executor)
            return None
        if head in module.classes and "." not in rest:
            method = module.classes[head].get(rest)
            return FunctionRef(module, method, dotted, head) if method is not None else None
        target = module.imports.get(head)
        if target is None:
            return None
        full = target.dotted if isinstance(target, ModuleImport) else target.full
        segments = rest.split(".")
        for k in range(len(segments) - 1, -1, -1):
            module_name = full + ("." + ".".join(segments[:k]) if k else "")
            other = self.loader.find(module_name, module)
            if other is not None:
                executor.depend(other.path)
                return self._find_function(".".join(segments[k:]), other, depth + 1, executor)
        return None

    # -- statement claims

    def _statement(self, comment: CommentClaim, parsed: ParsedClaim
                   ) -> tuple[list[Obligation], list[str], list[str]]:
        site = self._site_for(comment.line) if comment.trailing else None
        if site is None or not isinstance(site.node, (cst.Assign, cst.AugAssign, cst.AnnAssign, cst.Return)):
            raise ClaimProblem("error", "a `== EXPR` claim must trail an assignment, augmented assignment, "
                                         "annotated assignment or return statement on the same line")
        if isinstance(site.node, cst.AnnAssign) and site.node.value is None:
            raise ClaimProblem("error", "a `== EXPR` claim must trail a statement that assigns a value")
        if site.function is None:
            raise ClaimProblem("inconclusive", "statement claims are checked inside functions only; this "
                                                "statement is at module level")
        executor, scope, outcomes = self._run_for_sites(site.function)
        relevant = [o for o in outcomes if o.status is Status.STUCK and _stuck_matters(o, site)]
        if relevant:
            first = min(relevant, key=lambda o: o.line)
            raise ClaimProblem("inconclusive", first.reason)
        visits = executor.visits.get(self.module.position(site.node), [])
        constant = _constant_lookup(executor, scope, self.module)
        if not visits:
            raise ClaimProblem("inconclusive", f"no path of {site.function.qualname} reaches the statement at "
                                                f"line {site.line}")
        if any(visit.state.get("pi") is not None for visit in visits):
            parsed = _pi_as_variable(parsed)  # a local or parameter named pi: the claim's pi is that name
        obligations: list[Obligation] = []
        what = "the statement"
        for number, visit in enumerate(visits, start=1):
            unknown = first_unknown(visit.value)
            if unknown is not None:
                raise ClaimProblem("inconclusive", f"the value at line {site.line} cannot be followed: "
                                                    f"{unknown.reason}")
            if contains_none(visit.value):
                raise ClaimProblem("inconclusive", f"the value at line {site.line} is None, not a number")
            state = visit.state
            substituted = _target_value(parsed, lambda side: substitute(side, state, constant))
            unknown = first_unknown(substituted)
            if unknown is not None:
                raise ClaimProblem("inconclusive", f"the claim's expression cannot be followed: {unknown.reason}")
            conditions = tuple(substitute_condition(c, visit.state, constant) for c in parsed.conditions)
            for left, right, label in path_components(visit.value, substituted, what, "the claim",
                                                      visit.state.conditions):
                if len(visits) > 1 and not visit.state.conditions:
                    label = ", ".join(p for p in (f"visit {number}", label) if p)
                obligations.append(obligation(left, right, conditions, visit.state.conditions, label,
                                               visit.state.notes))
            if len(obligations) > MAX_OBLIGATIONS:
                raise ClaimProblem("inconclusive", f"more than {MAX_OBLIGATIONS} path obligations")
        obligations = with_particular_functions(unique(obligations))
        notes = list(executor.inlined) + list(dict.fromkeys(n for ob in obligations for n in ob.notes))
        return obligations, notes, executor.dependencies

    def _run_for_sites(self, function: FunctionRef) -> tuple[Executor, PythonScope, list[Outcome]]:
        key = function.key
        if key not in self._visits_cache:
            marks = frozenset(self.module.position(site.node) for site in self.sites if site.function == function)
            executor, scope = self._executor(marks)
            bindings, _ = method_receiver(executor, scope, function)
            outcomes = executor.run_function(_lowered(scope, function), bindings=bindings)
            self._visits_cache[key] = (executor, scope, outcomes)
        return self._visits_cache[key]


# ---------------------------------------------------------------- helpers


def _map_nested(item: Nested, change: Callable[[Expr], Expr]) -> Nested:
    return tuple(_map_nested(i, change) for i in item) if isinstance(item, tuple) else change(item)


def _target_value(parsed: ParsedClaim, convert: Callable[[Expr], Value]) -> Value:
    """The claim's result as a value: one component, or a tuple of them (rows of a matrix nest)."""
    def value(item: Nested) -> Value:
        return Seq(tuple(value(i) for i in item)) if isinstance(item, tuple) else convert(item)

    items = parsed.nested or parsed.sides
    return value(items[0]) if len(items) == 1 else Seq(tuple(value(i) for i in items))


def _lowered(scope: PythonScope, ref: FunctionRef) -> ir.Function:
    return scope.lower(ref.module, ref.node, ref.qualname, ref.class_name)


def _constant_lookup(executor: Executor, scope: PythonScope, module: ModuleInfo) -> ConstantLookup:
    """A claim's name that the code does not bind: the module constant of that name, when it can be read."""
    def constant(name: str) -> Value | None:
        if name not in module.constants or name in module.rebound:
            return None
        value = scope.module_constant(executor, module, name, 0)
        return None if first_unknown(value) is not None else value  # left free: code using it is inconclusive
    return constant


def _stuck_matters(outcome: Outcome, site: _StatementSite) -> bool:
    """A path stopped by an unsupported construct matters unless it stopped after the claimed statement."""
    if outcome.line <= site.line:
        return True
    return any(start <= site.line <= end for start, end in outcome.loops)


__all__ = ["extract_python"]
