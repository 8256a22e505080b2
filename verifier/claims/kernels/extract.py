"""Claims tied to kernel code (C, C++, CUDA, Fortran, Julia, Rust): ``returns``, ``same as``, ``== EXPR``.

Plain ``LEFT == RIGHT`` comments stay formulas (the expression reader, exactly as before).  A function
claim sits in the comment lines directly above a definition; a statement claim trails an assignment.
The claim's names are the code's: parameters, ``q.w``/``q->w``/``q%w`` fields, ``v[0]`` elements (Fortran
``v(1)``), earlier locals for statement claims.  The results of a function are its return value's
components followed by the out-parameters it writes (pointers, references, ``intent(out)``), in order.
"""
from __future__ import annotations

import os
import re
from dataclasses import replace

from verifier.claims.comments import CommentClaim
from verifier.claims.expression import error_claim, expression_claims
from verifier.claims.kernels import tree as t
from verifier.claims.kernels.library import KernelFile, KernelLibrary
from verifier.claims.kernels.ir_run import run_on_ir
from verifier.claims.kernels.locate import StatementSite, walk
from verifier.claims.kernels.parse import GrammarMissing, language_of
from verifier.claims.kernels.run import Agg, Runner, Stuck, Unknown, Value, as_real
from verifier.claims.kernels.values import (
    ClaimProblem,
    obligations_for,
    python_reference,
    substitute,
)
from verifier.claims.language import ClaimSyntaxError, ParsedClaim, parse_claim_text
from verifier.model.claim import Claim, ClaimKind, ExtractionContext, Location, Obligation, Problem

_SAME_AS_PATH = re.compile(r"^(\s*same\s+as\s+)(\S+?)::([A-Za-z_][\w.!]*)")
_STATEMENT_NODES = {
    "expression_statement", "declaration", "return_statement", "assignment_statement", "assignment",
    "compound_assignment_expression", "let_declaration", "return_expression",
}
_LOOPS = {"for_statement", "do_loop", "for_expression", "for_statement", "while_statement", "while_expression"}


def normalize_claim_text(text: str, language: str) -> str:
    """The claim in the claim language: ``q->w`` and ``q%w`` are ``q.w``, ``std::sqrt`` is ``sqrt``,
    Fortran ``v(1)`` is ``v[1]`` (lengths kept, so error columns still point into the comment)."""
    text = re.sub(r"(?<=\w)\s*->\s*(?=[A-Za-z_])", lambda m: ". " + " " * (len(m.group(0)) - 2)
                  if len(m.group(0)) >= 2 else ".", text)
    text = re.sub(r"\b(std|cuda|f64|f32|Base|math)::", lambda m: " " * len(m.group(0)), text)
    if language in ("cpp", "cuda"):  # `this->x` (now `this. x`) names the member `x`
        text = re.sub(r"\bthis\.\s*", lambda m: " " * len(m.group(0)), text)
    if language == "fortran":
        text = text.lower()  # Fortran names are case-insensitive; the front end spells them in lower case
        text = re.sub(r"(?<=\w)%(?=[A-Za-z_])", ".", text)
        from verifier.model.expr import KNOWN_FUNCTIONS

        def element(match: re.Match[str]) -> str:
            name = match.group(1)
            if name.lower() in KNOWN_FUNCTIONS or name.lower() in ("pow", "dsqrt", "abs"):
                return match.group(0)
            return f"{name}[{match.group(2)}]"

        text = re.sub(r"\b([A-Za-z_]\w*)\((\s*\d+\s*)\)", element, text)
        text = re.sub(r"\bdsqrt\(", "sqrt (", text, flags=re.IGNORECASE)
    return text


def extract_kernel(path: str, text: str, comments: list[CommentClaim], context: ExtractionContext) -> list[Claim]:
    """Every claim of the kernel file ``path``: formulas as before, function and statement claims on the code."""
    language = language_of(path)
    assert language is not None
    per_comment: list[list[Claim]] = [[] for _ in comments]
    pending: list[tuple[int, CommentClaim, ParsedClaim, str | None]] = []
    for index, comment in enumerate(comments):
        claim_text, other_path = comment.text, None
        match = _SAME_AS_PATH.match(claim_text)
        if match:
            other_path = match.group(2)
            claim_text = match.group(1) + match.group(3).replace("!", "_") + " " * (len(match.group(2)) + 2) + \
                claim_text[match.end():]
        try:
            parsed = parse_claim_text(normalize_claim_text(claim_text, language), context)
        except ClaimSyntaxError as error:
            if re.match(r"\s*(same\s+as|returns|==)", comment.text):
                kind: ClaimKind = "statement" if comment.text.lstrip().startswith("==") else "function"
                per_comment[index] = [error_claim(comment, path, error, kind)]
            else:
                per_comment[index] = expression_claims(comment, path, context)
            continue
        if parsed.form == "equation":
            per_comment[index] = expression_claims(comment, path, context)
        else:
            if match:
                parsed = replace(parsed, other=match.group(3))
            pending.append((index, comment, parsed, other_path))
    if pending:
        library = KernelLibrary(context.roots)
        try:
            home = library.add(path, text)
        except GrammarMissing as missing:
            for index, comment, parsed, _ in pending:
                per_comment[index] = [_problem_claim(path, comment, parsed, "inconclusive", str(missing))]
            home = None
        except (RecursionError, ValueError) as exc:
            for index, comment, parsed, _ in pending:
                per_comment[index] = [_problem_claim(path, comment, parsed, "error", f"cannot parse {path}: {exc}")]
            home = None
        if home is not None and home.source.problem is not None:
            problem = home.source.problem
            message = f"cannot parse {path}: {problem.message} (line {problem.line}, column {problem.column})"
            for index, comment, parsed, _ in pending:
                per_comment[index] = [_problem_claim(path, comment, parsed, "error", message)]
        elif home is not None:
            reader = _KernelReader(path, home, library, context)
            for index, comment, parsed, other_path in pending:
                per_comment[index] = [reader.claim(comment, parsed, other_path)]
    return [claim for claims in per_comment for claim in claims]


def kernel_same_as_claim(new_path: str, new_text: str, old_path: str, name: str, context: ExtractionContext,
                         given: tuple = ()) -> Claim:
    """`same as OLD::name` for the function ``name`` of the kernel file ``new_path`` (for audits)."""
    import posixpath

    library = KernelLibrary(context.roots)
    home = library.add(new_path, new_text)
    site = home.index.function_named(name)
    line = site.first_line if site is not None else 1
    relative = posixpath.relpath(old_path, posixpath.dirname(new_path) or ".")
    text = f"same as {relative}::{name}"
    comment = CommentClaim(max(1, line - 1), 1, text, max(1, line - 1), False)
    parsed = ParsedClaim("same_as", (), name, tuple(given))
    reader = _KernelReader(new_path, home, library, context)
    claim = reader.claim(comment, parsed, relative, site)
    return replace(claim, id=f"{new_path}:{line}:1", location=Location(new_path, line, 1))


def _kind(parsed: ParsedClaim) -> ClaimKind:
    return "statement" if parsed.form == "statement" else "function"


def _problem_claim(path: str, comment: CommentClaim, parsed: ParsedClaim, verdict: str, message: str) -> Claim:
    return Claim(f"{path}:{comment.line}:{comment.column}", Location(path, comment.line, comment.column),
                 _kind(parsed), comment.text, problem=Problem(verdict, message),  # type: ignore[arg-type]
                 dependencies=(path,))


class _KernelReader:
    def __init__(self, path: str, home: KernelFile, library: KernelLibrary, context: ExtractionContext):
        self.path = path
        self.home = home
        self.library = library
        self.context = context
        self.dependencies: list[str] = []

    def _runner(self) -> Runner:
        return Runner(self.library.resolver(self.home), self.context.unroll_limit, self.context.inline_depth)

    def claim(self, comment: CommentClaim, parsed: ParsedClaim, other_path: str | None, site: object = None) -> Claim:
        self.site = site  # set by audits: the function itself rather than the one below the comment
        self.dependencies = []
        self.library.used = []
        claim_id = f"{self.path}:{comment.line}:{comment.column}"
        location = Location(self.path, comment.line, comment.column)
        try:
            if parsed.form == "statement":
                obligations, notes = self._statement(comment, parsed)
            else:
                obligations, notes = self._function(comment, parsed, other_path)
        except ClaimProblem as problem:
            return Claim(claim_id, location, _kind(parsed), comment.text,
                         problem=Problem(problem.verdict, problem.message),  # type: ignore[arg-type]
                         dependencies=tuple(dict.fromkeys([self.path] + self.dependencies + self.library.used)))
        except RecursionError:
            return Claim(claim_id, location, _kind(parsed), comment.text,
                         problem=Problem("inconclusive", "the code is nested too deeply to follow"),
                         dependencies=(self.path,))
        deps = tuple(dict.fromkeys([self.path] + self.dependencies + self.library.used))
        return Claim(claim_id, location, _kind(parsed), comment.text, tuple(obligations), None, tuple(notes), deps)

    # -- function claims

    def _function(self, comment: CommentClaim, parsed: ParsedClaim, other_path: str | None
                  ) -> tuple[list[Obligation], list[str]]:
        form = "`same as`" if parsed.form == "same_as" else "`returns`"
        site = getattr(self, "site", None) or (
            None if comment.trailing else self.home.index.function_below(
                comment.end_line if comment.subject_line is None else comment.subject_line - 1))
        if site is None:
            raise ClaimProblem("error", f"a {form} claim must be in the comment lines directly above a function "
                                        "definition (comments and attributes may sit in between); none follows")
        function = self.home.function(site)
        runner = self._runner()
        outcomes = _run(runner, function)
        constants = self._constants(runner)
        if parsed.form == "returns":
            return obligations_for(function.name, outcomes, "the claim", None, parsed, constants), runner.inlined
        other_name = parsed.other or ""
        inputs = runner.input_names(function)
        args: list[Value] = [_parameter_value(function, name) for name in inputs]
        if other_path is None:
            other = self.home.named(other_name)
            if other is None:
                raise ClaimProblem("error", f"cannot find the function `{other_name}` in {self.path}")
            other_outcomes = _run(runner, other, args)
        else:
            target = os.path.normpath(os.path.join(os.path.dirname(self.path), other_path)).replace(os.sep, "/")
            self.dependencies.append(target)
            if target.lower().endswith((".py", ".pyi")):
                other_outcomes = python_reference(target, other_name, args, self.context)
            else:
                kernel = self.library.open(target)
                if kernel is None:
                    raise ClaimProblem("error", f"cannot read {target} (named by `same as {other_path}::"
                                                f"{other_name}`)")
                if kernel.source.problem is not None:
                    problem = kernel.source.problem
                    raise ClaimProblem("error", f"cannot parse {target}: {problem.message} (line {problem.line}, "
                                                f"column {problem.column})")
                other = kernel.named(other_name)
                if other is None:
                    raise ClaimProblem("error", f"cannot find the function `{other_name}` in {target}")
                other_runner = Runner(self.library.resolver(kernel), self.context.unroll_limit,
                                      self.context.inline_depth)
                other_outcomes = _run(other_runner, other, args)
                runner.inlined.extend(n for n in other_runner.inlined if n not in runner.inlined)
        return obligations_for(function.name, outcomes, other_name, other_outcomes, parsed, constants), \
            runner.inlined

    # -- statement claims

    def _statement(self, comment: CommentClaim, parsed: ParsedClaim) -> tuple[list[Obligation], list[str]]:
        site = self.home.index.statement_on(comment.line) if comment.trailing else None
        if site is None or not self._assigns(site):
            raise ClaimProblem("error", "a `== EXPR` claim must trail an assignment, a declaration with a value "
                                        "or a return statement on the same line")
        if site.function is None:
            raise ClaimProblem("inconclusive", "statement claims are checked inside functions only")
        function = self.home.function(site.function)
        runner = self._runner()
        try:
            runner.run(function)
        except Stuck as stuck:
            if stuck.line <= site.end_line or self._in_loop(site) or site.node.start_byte not in runner.visits:
                raise ClaimProblem("inconclusive", _reason(stuck, function)) from None
        visits = runner.visits.get(site.node.start_byte, [])
        if not visits:
            raise ClaimProblem("inconclusive", f"no path of {function.name} reaches the statement at line "
                                               f"{site.line}")
        constants = self._constants(runner)
        obligations: list[Obligation] = []
        for number, visit in enumerate(visits, start=1):
            label = f"visit {number}" if len(visits) > 1 and not visit.conditions else ""
            obligations.extend(obligations_for("the statement", [(visit.value, visit.conditions)], "the claim",
                                               None, parsed, constants, visit.scope, label))
        return _unique(obligations), runner.inlined

    def _assigns(self, site: StatementSite) -> bool:
        node = site.node
        if node.type not in _STATEMENT_NODES:
            return False
        if node.type == "expression_statement":
            inner = node.named_children[0] if node.named_children else None
            return inner is not None and inner.type in ("assignment_expression", "update_expression",
                                                        "compound_assignment_expr")
        if node.type == "declaration":
            return any(d.type == "init_declarator" for d in node.children_by_field_name("declarator"))
        if node.type == "let_declaration":
            return node.child_by_field_name("value") is not None
        return True

    def _in_loop(self, site: StatementSite) -> bool:
        node = site.node.parent
        while node is not None:
            if node.type in _LOOPS:
                return True
            node = node.parent
        return False

    def _constants(self, runner: Runner) -> dict[str, Value]:
        values: dict[str, Value] = {}
        for name, node in self.home.lowering.constants.items():
            values[name] = runner.constant(node, self.home.source.language)
        return values


def _parameter_value(function: t.Function, name: str) -> Value:
    from verifier.claims.kernels.run import SymInt
    from verifier.model.expr import Var

    param = next(p for p in function.params if p.name == name)
    if param.size or param.struct:
        return Agg(prefix=name, size=param.size, fields=function.structs.get(param.struct or "", ()),
                   base=function.index_base)
    return SymInt(name) if param.kind == "int" else Var(name)


def _run(runner: Runner, function: t.Function, args: list[Value] | None = None) -> list:
    try:
        on_ir = run_on_ir(function, runner.resolve, runner.unroll_limit, runner.inline_depth, args, runner.inlined)
        if on_ir is not None:
            return on_ir
        return [(outcome.results, outcome.conditions) for outcome in runner.run(function, args)]
    except Stuck as stuck:
        raise ClaimProblem("inconclusive", _reason(stuck, function)) from None


def _reason(stuck: Stuck, function: t.Function) -> str:
    reason = stuck.reason
    if f"line {stuck.line}" not in reason and stuck.line:
        reason += f" (line {stuck.line})"
    return f"{reason} (in {function.name})"


def _unique(obligations: list[Obligation]) -> list[Obligation]:
    seen: set = set()
    out = []
    for ob in obligations:
        key = (ob.left, ob.right, ob.conditions)
        if key not in seen:
            seen.add(key)
            out.append(ob)
    return out


__all__ = ["extract_kernel", "normalize_claim_text", "as_real", "Unknown", "substitute", "walk"]
