"""``workbench study`` and ``workbench demo``: check, run and report a study file."""

from __future__ import annotations

import argparse
import sys
from pathlib import Path
from typing import TYPE_CHECKING, Any

from workbench.core.errors import InputError
from workbench.core.text import json_safe
from workbench.interfaces.cli import (
    STDIO,
    add_fuels_option,
    add_quiet,
    command,
    open_in_browser,
    progress,
    vehicle_progress,
)
from workbench.io.files import check_target, write_text_atomic

if TYPE_CHECKING:
    from workbench.study.results import StudyResult
    from workbench.study.studyfile import Study

#: Keys of each candidate in ``study run --json``, from the candidates table.
JSON_KEYS = {
    "id": "candidate", "name": "name", "fuel": "fuel", "is_baseline": "is_baseline",
    "fuel_energy_mj_per_km": "fuel_energy_mj_per_km", "co2_ttw_g_per_km": "co2_ttw_g_per_km",
    "co2e_wtw_g_per_km": "co2e_wtw_g_per_km", "nox_g_per_km": "nox_g_per_km",
    "cost_per_km": "cost_per_km", "levelised_cost_per_km": "levelised_cost_per_km",
    "npv_vs_baseline": "npv_vs_baseline", "payback_years": "payback_years",
    "discounted_payback_years": "discounted_payback_years",
    "co2e_avoided_t": "co2e_avoided_t", "raises_co2e": "raises_co2e",
    "cost_per_t_co2e_avoided": "cost_per_t_co2e_avoided",
    "nox_avoided_kg": "nox_avoided_kg", "raises_nox": "raises_nox",
    "cost_per_kg_nox_avoided": "cost_per_kg_nox_avoided", "p_npv_positive": "p_npv_positive",
    "p_discounted_payback_within_horizon": "p_discounted_payback_within_horizon",
    "npv_p10": "npv_p10",
    "npv_p50": "npv_p50", "npv_p90": "npv_p90",
}


def register(sub: argparse._SubParsersAction) -> None:
    """Add the ``study`` group and the ``demo`` command."""
    group = command(sub, "study", help="check, run and report a study file",
                    description="A study file (format: `workbench docs study-file`) names a "
                    "fleet, its duties, the baseline and candidate fuels, prices and the "
                    "programme; check it, run it, or write its HTML report.",
                    example=["workbench study check my-fleet.toml",
                             "workbench study report my-fleet.toml -o my-fleet.html --open"])
    ssub = group.add_subparsers(dest="study_command", required=True, parser_class=type(group),
                                metavar="COMMAND")

    p = command(ssub, "check", help="check a study file and say what it holds and assumes",
                description="Check every value of a study file and the profile, vehicle and "
                "map files it names; say what it holds and every default a run would apply. "
                "Each error names its key path or file.",
                example=["workbench study check my-fleet.toml",
                         "cat my-fleet.toml | workbench study check -"])
    _file_argument(p)
    add_fuels_option(p)
    p.add_argument("--quiet-defaults", action="store_true",
                   help="leave out the list of defaults applied (warnings are still shown)")
    p.set_defaults(func=_check)

    p = command(ssub, "run", help="run a study: candidates side by side",
                description="Run a study and print the candidates side by side: energy, CO2, "
                "NOx, cost per km, NPV and payback against the baseline, and the Monte Carlo "
                "odds.",
                example=["workbench study run my-fleet.toml --draws 0",
                         "workbench study run my-fleet.toml --csv results/",
                         "workbench study run my-fleet.toml --csv - > all-tables.csv"])
    _file_argument(p)
    _run_options(p)
    p.add_argument("--csv", metavar="DIR",
                   help=f"also write every result table as CSV here ('{STDIO}': every table "
                        "to standard output instead of the summary, each after a '# name' line)")
    add_fuels_option(p)
    p.set_defaults(func=_run)

    p = command(ssub, "report", help="write the study's self-contained HTML report",
                description="Run a study and write its report: one HTML file with every chart "
                "and table, the assumptions, sources and the study file's SHA-256.",
                example=["workbench study report my-fleet.toml -o my-fleet.html --open",
                         f"workbench study report my-fleet.toml -o {STDIO} > my-fleet.html"])
    _file_argument(p)
    p.add_argument("-o", "--output", required=True, metavar="HTML",
                   help=f"report file (.html); '{STDIO}' writes it to standard output")
    _report_options(p)
    _run_options(p)
    add_fuels_option(p)
    p.set_defaults(func=_report)

    p = command(sub, "demo", help="run the shipped demo study of a fictional fleet",
                description="Run the shipped demo study (the fictional port city Kestrel Bay; "
                "every number is invented) and print its candidates.",
                example=["workbench demo", "workbench demo -o kestrel-bay.html --open"])
    p.add_argument("-o", "--output", metavar="HTML",
                   help=f"also write its HTML report to this file ('{STDIO}': to standard "
                        "output, instead of the table)")
    _report_options(p)
    _run_options(p)
    p.set_defaults(func=_demo)


def _file_argument(p: argparse.ArgumentParser) -> None:
    p.add_argument("file", help="study .toml file (format: `workbench docs study-file`); "
                   f"'{STDIO}' reads it from standard input (relative paths in it from the "
                   "working folder)")


def _report_options(p: argparse.ArgumentParser) -> None:
    p.add_argument("--open", action="store_true",
                   help="open the written report in the web browser")


def _run_options(p: argparse.ArgumentParser) -> None:
    p.add_argument("--draws", type=int, metavar="N",
                   help="Monte Carlo draws (default: the study's; 0 skips the Monte Carlo)")
    p.add_argument("--json", action="store_true", help="print JSON")
    add_quiet(p)


def _study(path: str) -> Study:
    from workbench.study.studyfile import parse_study, read_study

    if path == STDIO:
        from workbench.interfaces.cli import read_text_arg

        return parse_study(read_text_arg(path, "FILE"), where="<stdin>", base_dir=Path.cwd())
    return read_study(path)


def _result(study: Study, args: argparse.Namespace) -> StudyResult:
    from workbench.study.runner import run
    from workbench.study.studyfile import check_draws

    if args.draws is not None:
        check_draws(args.draws, study.inputs, "--draws")
    return run(study, draws=args.draws, progress=progress(args),
               vehicles=vehicle_progress(args))


def _check(args: argparse.Namespace) -> None:
    from workbench.io.logs import FleetSource
    from workbench.study.results import default_lines, notice_lines
    from workbench.study.runner import defaults_rows, notice_rows

    i = _study(args.file).inputs  # reads every file the study names: errors name file and row
    for c in i.classes:
        if isinstance(c.profile_data, FleetSource):
            print(f"class {c.id}: {len(c.profile_data.vehicles)} vehicles' logs in {c.profile}")
            for line in c.profile_data.problems:
                print(f"class {c.id}: left out: {line}")
    print(f"ok: {args.file}: {len(i.classes)} vehicle classes "
          f"({sum(c.count for c in i.classes)} vehicles), baseline {i.baseline.id!r}, "
          f"{len(i.candidates)} candidates, {len(i.uncertain)} uncertain inputs, "
          f"{i.horizon_years} years from {i.start_year}")
    _print_lines(notice_lines(notice_rows(i)))
    if not args.quiet_defaults:
        _print_lines(default_lines(defaults_rows(i)))


def _print_lines(lines: list[str]) -> None:
    if lines:
        print("\n".join(lines))


def result_json(result: StudyResult) -> dict[str, Any]:
    """The JSON object ``study run --json`` prints.

    Parameters
    ----------
    result : StudyResult
        A run.

    Returns
    -------
    dict
        ``title``, ``currency``, ``candidates`` (one object per option, baseline first,
        keys of :data:`JSON_KEYS`; missing values and payback that never comes are null) and
        ``per_km`` (one object per option and vehicle class), ``defaults`` (one object per
        value the run took that the study did not give), ``notices`` (one-line warnings),
        ``class_decisions`` (each class's conversion alone) and ``best_mix`` (the best option
        per class, one object per class with the mix's figures).
    """
    cands = [{k: json_safe(row[col]) for k, col in JSON_KEYS.items()}
             for row in result.candidates.to_dict("records")]
    per_km = [json_safe(row) for row in result.per_km.to_dict("records")]
    tables = {name: [json_safe(row) for row in getattr(result, name).to_dict("records")]
              for name in ("defaults", "notices", "class_decisions", "best_mix")}
    return {"title": result.title, "currency": result.currency, "candidates": cands,
            "per_km": per_km, **tables}


def _print_result(result: StudyResult, args: argparse.Namespace) -> None:
    from workbench.interfaces.cli import print_json
    from workbench.interfaces.sheets import format_table
    from workbench.study.results import missing_reason, notice_lines

    if args.json:
        print_json(result_json(result))
        return
    cur = result.currency
    units = {
        "name": "", "fuel": "", "fuel_energy_mj_per_km": "MJ/km", "co2_ttw_g_per_km": "g/km",
        "co2e_wtw_g_per_km": "g/km", "nox_g_per_km": "g/km", "cost_per_km": f"{cur}/km",
        "levelised_cost_per_km": f"{cur}/km", "npv_vs_baseline": cur,
        "payback_years": "year", "discounted_payback_years": "year",
        "co2e_avoided_t": "t", "cost_per_t_co2e_avoided": f"{cur}/t",
        "nox_avoided_kg": "kg", "cost_per_kg_nox_avoided": f"{cur}/kg",
        "p_npv_positive": "-", "p_discounted_payback_within_horizon": "-",
        "npv_p10": cur, "npv_p90": cur,
    }
    records = [r | {"name": r["id"]} for r in result_json(result)["candidates"]]
    print(result.title)
    print(format_table([{k: missing_reason(r, k) or r.get(k) for k in units} for r in records],
                       units))
    from workbench.study.decisions import mix_line

    if len(result.class_decisions):
        print("\nEach class converted on its own (no programme costs):")
        decisions = [{"name": f"{r['candidate']}/{r['vehicle_class']}", **r}
                     for r in result_json(result)["class_decisions"]]
        print(format_table(decisions, {
            "name": "", "npv_vs_baseline": cur, "discounted_payback_years": "year",
            "co2e_avoided_t": "t", "nox_avoided_kg": "kg", "p_npv_positive": "-"}))
    _print_lines([mix_line(result.best_mix)] if len(result.best_mix) else [])
    _print_lines(notice_lines(result.notices))
    if len(result.defaults):
        print(f"{len(result.defaults)} defaults applied (the study did not give them); "
              "`workbench study check FILE` lists each with its source, --json has them as "
              "'defaults'")


def _run(args: argparse.Namespace) -> None:
    if args.csv == STDIO and args.json:
        raise InputError("--csv", f"'{STDIO}' and --json both print to standard output; "
                         "pick one")
    folder = Path(args.csv) if args.csv and args.csv != STDIO else None
    if folder is not None and folder.exists() and not folder.is_dir():
        raise InputError("--csv", f"{folder} is a file, not a folder; name a folder")
    study = _study(args.file)
    result = _result(study, args)
    if args.csv == STDIO:
        print("\n".join(f"# {name}\n{table.to_csv(index=False)}"
                        for name, table in result.tables().items()), end="")
        return
    if folder is not None:
        try:
            folder.mkdir(parents=True, exist_ok=True)  # the folder is made when it is missing
        except OSError as exc:
            raise InputError("--csv", f"cannot make the folder {folder} ({exc.strerror}); "
                             "name another") from None
        for name, table in result.tables().items():
            write_text_atomic(folder / f"{name}.csv", table.to_csv(index=False),
                              suffix=".csv", option="--csv")
    _print_result(result, args)


def _write_report(study: Study, result: StudyResult, args: argparse.Namespace,
                  note: str = "") -> None:
    """Write the report to ``-o`` (or standard output), say so, and open it if asked."""
    if args.output == STDIO:
        from workbench.interfaces.report import study_report_html

        sys.stdout.write(study_report_html(study, result))
        return
    from workbench.interfaces.report import write_study_report

    path = write_study_report(study, result, args.output)
    if not (args.json or args.quiet):
        print(f"report written: {path}{note}")
    if args.open:
        open_in_browser(path)


def _report(args: argparse.Namespace) -> None:
    _check_output(args)
    study = _study(args.file)
    result = _result(study, args)
    _write_report(study, result, args)


def _check_output(args: argparse.Namespace) -> None:
    """Refuse a report target that cannot be written, before any work."""
    if args.output == STDIO:
        if args.json:
            raise InputError("-o", f"'{STDIO}' and --json both print to standard output; "
                             "pick one")
        if args.open:
            raise InputError("--open", "opens a report file; give -o a file name, not "
                             f"'{STDIO}'")
        return
    if args.output is None:
        if args.open:
            raise InputError("--open", "needs -o HTML: the report file to write and open")
        return
    check_target(Path(args.output), suffix=".html", option="-o")


def _demo(args: argparse.Namespace) -> None:
    from workbench.study.studyfile import DEMO_STUDY

    _check_output(args)
    study = _study(str(DEMO_STUDY))
    result = _result(study, args)
    if args.output != STDIO:
        _print_result(result, args)
    if args.output:
        if args.output != STDIO and not (args.json or args.quiet):
            print()
        _write_report(study, result, args, " (fictional demo: every number is invented)")
