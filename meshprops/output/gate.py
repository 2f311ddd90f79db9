"""The gate's documents (plain dicts, SI) and their text renderings: ``check`` and ``budget``.

One serializer per result (:func:`gate_document`, :func:`budget_to_dict`) feeds
both the JSON and the text, so they can never disagree.
"""

from __future__ import annotations

import numpy as np

from ..gate.rules import Verdict
from .plain_records import plain_gate_fields  # noqa: F401  (re-exported)


def verdict_to_dict(verdict: Verdict) -> dict:
    """A verdict as plain JSON data (the one serializer of verdicts; SI values)."""

    def plain(value):
        if value is None:
            return None
        if isinstance(value, np.ndarray):
            return [float(v) for v in value]
        if isinstance(value, (list, tuple)):
            return [plain(v) for v in value]
        return float(value)

    return {
        "rule": verdict.rule,
        "quantity": verdict.quantity,
        "limit": [plain(verdict.limit[0]), plain(verdict.limit[1])],
        "value": float(verdict.value),
        "unit": verdict.unit,
        "verdict": verdict.verdict,
        "source": verdict.source,
        "subject": verdict.subject,
        "old": plain(verdict.old),
        "new": plain(verdict.new),
        "change": plain(verdict.change),
        "key": verdict.key,
        "message": verdict.message,
    }


def _finding_to_dict(finding) -> dict:
    from .serialize import finding_to_dict

    return finding_to_dict(finding)


def _mesh_to_dict(measured) -> dict | None:
    if measured is None:
        return None
    report = measured.report
    return {
        "format": measured.file_format,
        "length_unit": measured.length_unit,
        "faces": measured.face_count,
        "vertices": report.vertex_count,
        "edges": report.edge_count,
        "shells": report.extra.get("shells"),
        "voids": report.extra.get("voids"),
        "holes": report.extra.get("holes"),
        "self_intersections_checked": report.extra.get("self_intersections_checked"),
    }


def numbers_to_dict(numbers) -> dict | None:
    """A part's gate numbers (:class:`meshprops.gate.runner.PartNumbers`), SI; ``None`` stays ``None``."""
    if numbers is None:
        return None
    return {
        "volume": float(numbers.volume),
        "mass": float(numbers.mass),
        "center_of_mass": [float(v) for v in numbers.center_of_mass],
        "principal_moments": [float(v) for v in numbers.principal_moments],
        "size": float(numbers.size),
    }


def file_outcome_to_dict(outcome) -> dict:
    """One file of a gate run: the keys of the check document's file entries plus the gate's."""
    findings = outcome.findings
    settings = outcome.settings
    return {
        "source": outcome.source,
        "valid": outcome.valid,
        "errors": sum(1 for f in findings if f.severity == "error"),
        "warnings": sum(1 for f in findings if f.severity == "warning"),
        "findings": [_finding_to_dict(f) for f in findings],
        "mesh": _mesh_to_dict(outcome.measured),
        "status": outcome.status,
        "content_hash": outcome.content_hash,
        "baseline_key": outcome.key,
        "settings": {
            "length_unit": settings.length_unit,
            "density": settings.density,
            "density_assumed": settings.density_assumed,
            "material": settings.material,
            "from": settings.origin,
        },
        "numbers": numbers_to_dict(outcome.numbers),
        "rules": [verdict_to_dict(v) for v in outcome.verdicts],
        "passed": not (outcome.errors or outcome.failed_verdicts),
    }


def budget_to_dict(rollup) -> dict | None:
    """A budget roll-up (:class:`meshprops.gate.budget.BudgetRollup`), kg."""
    if rollup is None:
        return None

    def item(entry) -> dict:
        return {
            "name": entry.name,
            "source": entry.source,
            "maturity": entry.maturity,
            "basic_mass": entry.basic_mass,
            "growth_allowance": entry.growth_allowance,
            "growth": entry.growth,
            "predicted_mass": entry.predicted_mass,
        }

    return {
        "name": rollup.name,
        "allocation": rollup.allocation,
        "basic_mass": rollup.basic_mass,
        "growth": rollup.growth,
        "predicted_mass": rollup.predicted_mass,
        "margin": rollup.margin,
        "margin_fraction": rollup.margin_fraction,
        "unallocated": rollup.unallocated,
        "growth_allowance": dict(rollup.growth_allowance),
        "growth_allowance_source": rollup.growth_allowance_source,
        "subsystems": [
            {
                "name": s.name,
                "allocation": s.allocation,
                "basic_mass": s.basic_mass,
                "growth": s.growth,
                "predicted_mass": s.predicted_mass,
                "margin": s.margin,
                "margin_fraction": s.margin_fraction,
                "verdict": s.verdict.verdict,
                "items": [item(i) for i in s.items],
            }
            for s in rollup.subsystems
        ],
        "rules": [verdict_to_dict(v) for v in rollup.verdicts],
        "notes": list(rollup.notes),
        "passed": not rollup.failed,
    }


def gate_summary(report) -> dict:
    files = report.files
    return {
        "files": len(files),
        "valid": sum(1 for f in files if f.valid),
        "errors": report.error_count,
        "warnings": report.warning_count,
        "unchanged": sum(1 for f in files if f.status == "unchanged"),
        "changed": sum(1 for f in files if f.status == "changed"),
        "new": sum(1 for f in files if f.status == "new"),
        "failed_rules": len(report.failed_verdicts),
        "passed": report.passed,
    }


def gate_fields(report) -> dict:
    """The keys a gate run adds at the top of the check document."""
    return {
        "gate": {
            "config": report.config_path,
            "baseline": report.baseline_path,
            "fail_on": report.fail_on,
            "passed": report.passed,
            "exit_code": report.exit_code,
            "notes": list(report.notes),
        },
        "budget": budget_to_dict(report.budget),
    }


# ------------------------------------------------------------------------------ text

_CAUTION = (
    "Budget masses from geometry assume uniform density; confirm flight, lifting or balance-critical masses by "
    "weighing, and follow your programme's mass control plan, local codes and licensed practice."
)


def _kg(value: float) -> str:
    return f"{value + 0.0:.4f}"


def render_budget_table(budget: dict) -> str:
    """The roll-up as a table: one row per subsystem, its items below, then the product."""
    header = (
        f"{'subsystem / item':<34} {'maturity':<10} {'basic':>9} {'allow.':>7} {'predicted':>10} "
        f"{'allocation':>10} {'margin':>9} {'margin %':>8}  verdict"
    )
    lines = [f"mass budget {budget['name']!r} (kg)", header, "-" * len(header)]
    for subsystem in budget["subsystems"]:
        lines.append(
            f"{subsystem['name']:<34} {'':<10} {_kg(subsystem['basic_mass']):>9} {'':>7} "
            f"{_kg(subsystem['predicted_mass']):>10} {_kg(subsystem['allocation']):>10} "
            f"{subsystem['margin'] + 0.0:>+9.4f} {subsystem['margin_fraction'] * 100:>+7.1f}%  {subsystem['verdict'].upper()}"
        )
        for item in subsystem["items"]:
            lines.append(
                f"  {item['name'][:32]:<32} {item['maturity']:<10} {_kg(item['basic_mass']):>9} "
                f"{item['growth_allowance'] * 100:>6.1f}% {_kg(item['predicted_mass']):>10}"
            )
    lines.append("-" * len(header))
    verdict = "PASS" if budget["margin"] >= 0 else "FAIL"
    lines.append(
        f"{'product ' + budget['name']:<34} {'':<10} {_kg(budget['basic_mass']):>9} {'':>7} "
        f"{_kg(budget['predicted_mass']):>10} {_kg(budget['allocation']):>10} {budget['margin'] + 0.0:>+9.4f} "
        f"{budget['margin_fraction'] * 100:>+7.1f}%  {verdict}"
    )
    lines.append(f"unallocated (product allocation minus the subsystems'): {budget['unallocated'] + 0.0:+.4f} kg")
    table = ", ".join(f"{name} {value * 100:g} %" for name, value in budget["growth_allowance"].items())
    lines.append(f"growth allowance by maturity: {table}")
    lines.append(f"  source: {budget['growth_allowance_source']}")
    lines.append("predicted = basic x (1 + growth allowance); margin = allocation - predicted")
    for note in budget["notes"]:
        lines.append(f"note: {note}")
    for rule in budget["rules"]:
        if rule["verdict"] == "fail":
            lines.append(f"FAIL budget: {rule['message']}")
    lines.append(_CAUTION)
    return "\n".join(lines) + "\n"


def render_gate_text(doc: dict) -> str:
    """A check document with gate keys as text: each file, its findings, its failed or limited quantities."""
    lines: list[str] = []
    for entry in doc["files"]:
        mesh = entry["mesh"]
        status = entry.get("status", "checked")
        if mesh is None:
            lines.append(f"{entry['source']}  [{status}: bytes and settings as recorded in the baseline, not read again]")
        else:
            state = "valid" if entry["valid"] else "INVALID"
            lines.append(
                f"{entry['source']}  [{state}, {status}]  {mesh['faces']} faces, {mesh['vertices']} vertices, "
                f"{mesh['shells']} shell(s), coordinates in {mesh['length_unit']}"
            )
        if status == "new":
            lines.append("  new: not in the baseline (record it with `meshprops baseline FILE`)")
        for finding in entry["findings"]:
            faces = ",".join(str(place["face"]) for place in finding["where"]) or "-"
            lines.append(f"  {finding['severity']:<8}  {finding['code']:<28}  {finding['count']:>6}  faces {faces:<16}  {finding['message']}")
        for rule in entry["rules"]:
            if rule["verdict"] == "fail" or rule["rule"] != "baseline":
                lines.append(f"  {rule['verdict'].upper():<8}  {rule['rule']:<28}  {entry['source']}: {rule['message']}")
        if status == "changed" and not any(r["verdict"] == "fail" for r in entry["rules"] if r["rule"] == "baseline"):
            lines.append("  changed bytes, mass properties within the baseline's tolerances")
    if doc.get("budget") is not None:
        lines.append("")
        lines.append(render_budget_table(doc["budget"]).rstrip("\n"))
    summary = doc["summary"]
    lines.append("")
    lines.append(
        f"{summary['files']} file(s): {summary['valid']} valid, {summary['errors']} error finding(s), "
        f"{summary['warnings']} warning finding(s), {summary.get('failed_rules', 0)} failed limit(s); "
        f"{summary.get('unchanged', 0)} unchanged, {summary.get('changed', 0)} changed, {summary.get('new', 0)} new"
    )
    gate = doc.get("gate")
    if gate is not None:
        verdict = "passed" if gate["passed"] else "FAILED"
        why = ""
        if not gate["passed"] and summary["errors"] == 0 and summary.get("failed_rules", 0) == 0:
            why = " (fail_on = \"warning\")"
        lines.append(f"gate {verdict}{why}")
    return "\n".join(lines) + "\n"


def gate_check_document(report, *, input_length_unit: str) -> dict:
    """The JSON document of ``meshprops check``: the check document's keys, each file with the
    gate's keys (``status``, ``rules``, ...), plus ``gate`` and ``budget`` at the top."""
    from ..units import SI_UNITS
    from ..version import __version__
    from .serialize import CHECK_SCHEMA_NAME, CHECK_SCHEMA_VERSION

    return {
        "schema": CHECK_SCHEMA_NAME,
        "schema_version": CHECK_SCHEMA_VERSION,
        "meshprops_version": __version__,
        "units": dict(SI_UNITS, input_length_unit=input_length_unit),
        "files": [file_outcome_to_dict(outcome) for outcome in report.files],
        "summary": gate_summary(report),
        **gate_fields(report),
    }


def budget_document(rollup, *, config_path: str) -> dict:
    """The JSON document of ``meshprops budget``."""
    from ..version import __version__

    return {
        "schema": "meshprops.budget",
        "schema_version": 1,
        "meshprops_version": __version__,
        "units": {"mass": "kg", "growth_allowance": "fraction (0.05 is 5 %)"},
        "config": config_path,
        "budget": budget_to_dict(rollup),
        "cautions": [_CAUTION],
    }
