"""``workbench study`` and ``workbench demo``: check, run and report a study file."""

from __future__ import annotations

import argparse
from pathlib import Path
from typing import Any

from workbench.core.errors import InputError
from workbench.core.text import json_safe
from workbench.interfaces.cli import add_fuels_option
from workbench.interfaces.sheets import format_table
from workbench.io.files import check_target, write_text_atomic
from workbench.study.results import StudyResult, default_lines, missing_reason, notice_lines
from workbench.study.studyfile import DEMO_STUDY, Study, read_study

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
    group = sub.add_parser("study", help="check, run and report a study file")
    ssub = group.add_subparsers(dest="study_command", required=True, parser_class=type(group))

    p = ssub.add_parser("check", help="check a study file and say what it holds and assumes")
    p.add_argument("file", help="study .toml file (format: `workbench docs study-file`)")
    add_fuels_option(p)
    p.add_argument("--quiet-defaults", action="store_true",
                   help="leave out the list of defaults applied (warnings are still shown)")
    p.set_defaults(func=_check)

    p = ssub.add_parser("run", help="run a study: candidates side by side")
    p.add_argument("file", help="study .toml file")
    _run_options(p)
    p.add_argument("--csv", metavar="DIR", help="also write every result table as CSV here")
    add_fuels_option(p)
    p.set_defaults(func=_run)

    p = ssub.add_parser("report", help="write the study's self-contained HTML report")
    p.add_argument("file", help="study .toml file")
    p.add_argument("-o", "--output", required=True, metavar="HTML", help="report file (.html)")
    _run_options(p)
    add_fuels_option(p)
    p.set_defaults(func=_report)

    p = sub.add_parser("demo", help="run the shipped demo study of a fictional fleet")
    p.add_argument("-o", "--output", metavar="HTML",
                   help="also write its HTML report to this file")
    _run_options(p)
    p.set_defaults(func=_demo)


def _run_options(p: argparse.ArgumentParser) -> None:
    p.add_argument("--draws", type=int, metavar="N",
                   help="Monte Carlo draws (default: the study's; 0 skips the Monte Carlo)")
    p.add_argument("--json", action="store_true", help="print JSON")


def _study(path: str) -> Study:
    return read_study(path)


def _result(study: Study, args: argparse.Namespace) -> StudyResult:
    from workbench.study.runner import run
    from workbench.study.studyfile import check_draws

    if args.draws is not None:
        check_draws(args.draws, study.inputs, "--draws")
    return run(study, draws=args.draws)


def _check(args: argparse.Namespace) -> None:
    from workbench.io.logs import FleetSource
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
    study = _study(args.file)
    if args.csv and not Path(args.csv).is_dir():
        raise InputError("--csv", f"folder {args.csv} does not exist; create it first")
    result = _result(study, args)
    if args.csv:
        for name, table in result.tables().items():
            write_text_atomic(Path(args.csv) / f"{name}.csv", table.to_csv(index=False),
                              suffix=".csv", option="--csv")
    _print_result(result, args)


def _write_report(study: Study, result: StudyResult, output: str) -> Path:
    from workbench.interfaces.report import write_study_report

    return write_study_report(study, result, output)


def _report(args: argparse.Namespace) -> None:
    study = _study(args.file)
    _check_output(args.output)
    result = _result(study, args)
    path = _write_report(study, result, args.output)
    if not args.json:
        print(f"report written: {path}")


def _check_output(output: str) -> None:
    check_target(Path(output), suffix=".html", option="-o")


def _demo(args: argparse.Namespace) -> None:
    if args.output:
        _check_output(args.output)
    study = _study(str(DEMO_STUDY))
    result = _result(study, args)
    _print_result(result, args)
    if args.output:
        path = _write_report(study, result, args.output)
        if not args.json:
            print(f"\nreport written: {path} (fictional demo: every number is invented)")
