"""``tellwave rulebook``: check, test and explain rulebooks."""

from __future__ import annotations

from ..common.errors import UsageError
from ._common import Parser, add_site_option, rulebook, say


def register(sub) -> None:
    """Add ``tellwave rulebook`` and its actions (check, test, explain, list, vocabulary, parameters)."""
    p = sub.add_parser("rulebook", help="check, test, list and explain rulebooks and their vocabulary")
    rb = p.add_subparsers(dest="action", metavar="ACTION", parser_class=Parser)
    p.set_defaults(run=lambda args: _usage(p))
    for name, helptext, run in (("check", "validate the rulebooks and summarise rules per fault", _check),
                                ("test", "run every case in a folder and report which pass", _test),
                                ("explain", "print one rule in plain words with its source", _explain),
                                ("list", "list every loaded rule: id, weight, what it concludes, title", _list),
                                ("vocabulary", "list every fact kind and field rules can use, with units",
                                 _vocabulary),
                                ("parameters", "list the named parameters, their values and sources", _parameters)):
        q = rb.add_parser(name, help=helptext)
        if name == "test":
            q.add_argument("cases", metavar="CASES_FOLDER",
                           help="folder of *.case.yaml files (the shipped examples: cases/demo)")
            q.add_argument("--depth", type=_depth, default=0, metavar="N",
                           help="also search sub-folders up to N levels down (default 0: the folder only); "
                                "hidden, virtual-environment and package folders are never searched")
        if name == "explain":
            q.add_argument("rule_id", metavar="RULE_ID",
                           help="id of the rule, as 'tellwave rulebook list' shows it (e.g. bearing.defect.envelope)")
        add_site_option(q)
        q.set_defaults(run=run)


def _depth(text: str) -> int:
    """The --depth of ``rulebook test``: a whole number from 0 to ``MAX_CASE_DEPTH``."""
    from ..pipeline.cases import MAX_CASE_DEPTH

    try:
        value = int(text)
    except ValueError:
        raise UsageError(f"argument --depth: expected a whole number of folder levels, got {text!r}") from None
    if not 0 <= value <= MAX_CASE_DEPTH:
        raise UsageError(f"argument --depth: expected 0 to {MAX_CASE_DEPTH}, got {value}")
    return value


def _usage(p) -> int:
    import sys

    p.print_help(sys.stderr)
    return 2


def _check(args) -> int:
    """Every problem of the rulebooks on its own line (exit 5), or their summary."""
    from ..advice import check_fault_advice, load_advice
    from ..reasoning.explain import summary
    from ..reasoning.rulebook import RulebookProblems

    try:
        book = rulebook(args)
    except RulebookProblems as exc:
        return _problems(exc.problems)
    wrong = check_fault_advice({fid: f.advice for fid, f in book.faults.items() if f.advice}, load_advice())
    if len(wrong) == 1:
        raise wrong[0]
    if wrong:
        return _problems(wrong)
    _print(summary(book))
    from pathlib import Path

    from ..reasoning.rulebook import SHIPPED

    advised = load_advice()["faults"]
    for fid, fault in sorted(book.faults.items()):
        site = Path(fault.path).resolve().parent != Path(SHIPPED).resolve()
        if site and fault.advice is None and fid not in advised:
            say(f"  note: fault {fid} ({fault.path}) gives no advice: its report will have nothing under what to do "
                "(see 'Site faults' in rulebooks/README.md)")
    say("rulebooks are valid")
    return 0


def _problems(problems) -> int:
    """Each problem on its own line of stderr, then their count; the exit code of a bad rulebook."""
    import sys

    from ..common.errors import RulebookError
    from ..common.escape import one_line

    for problem in problems:
        print(f"tellwave: error: {one_line(problem)}", file=sys.stderr)
    print(f"tellwave: {len(problems)} problems in the rulebooks", file=sys.stderr)
    return RulebookError.exit_code


def _print(lines) -> int:
    """One line per item, whatever a site rule's title holds: line breaks and control characters as codes."""
    from ..common.escape import one_line

    for line in lines:
        print(one_line(line))
    return 0


def _list(args) -> int:
    from ..reasoning.explain import rule_list

    return _print(rule_list(rulebook(args)))


def _vocabulary(args) -> int:
    from ..reasoning.explain import vocabulary

    return _print(vocabulary(rulebook(args)))


def _parameters(args) -> int:
    from ..reasoning.explain import parameters

    return _print(parameters(rulebook(args)))


def _explain(args) -> int:
    from ..reasoning.explain import explain

    book = rulebook(args)
    try:
        rule = book.rule(args.rule_id)
    except KeyError:
        if args.rule_id in book.disabled:
            reason, path = book.disabled[args.rule_id]
            raise UsageError(f"rule {args.rule_id} is switched off by {path}: {reason}") from None
        import difflib

        near = [r.id for r in book.rules if args.rule_id in r.id][:5] or difflib.get_close_matches(
            args.rule_id, [r.id for r in book.rules], n=3, cutoff=0.75)
        hint = f"; did you mean {', '.join(near)}?" if near else ""
        where = ("" if args.site else "; a site's own rule is in its overlay: pass its folder with --site")
        raise UsageError(f"no rule has id {args.rule_id!r} in the rulebooks loaded{hint}{where}") from None
    return _print(explain(rule, book))


def _test(args) -> int:
    from ..common.errors import EXIT_CASE_FAILED
    from ..pipeline.cases import case_files, load_case, run_case
    from ..reasoning import Reasoner

    reasoner = Reasoner(rulebook(args))
    files = case_files(args.cases, args.depth)
    where = "in the folder" if args.depth == 0 else f"in the folder and {args.depth} level(s) of sub-folders"
    if not files:
        hint = "" if args.depth else " (--depth N also searches sub-folders)"
        raise UsageError(f"{args.cases}: no *.case.yaml files {where}{hint}")
    say(f"{len(files)} case file(s) found {where}")
    failed = 0
    for path in files:
        result = run_case(load_case(path), reasoner)
        failed += not result.passed
        expected = result.case.expect
        want = ("withheld" if expected.get("withheld") else "nothing confident" if expected.get("nothing")
                else f"{expected['fault']}" + (f" on {expected['component']}" if "component" in expected else ""))
        mark = "pass" if result.passed else "FAIL"
        say(f"{mark}  {path}: {result.case.name}\n      expected {want}; got {result.got}")
    say(f"{len(files) - failed} of {len(files)} cases pass")
    return EXIT_CASE_FAILED if failed else 0
