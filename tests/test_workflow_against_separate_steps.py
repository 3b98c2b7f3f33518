"""The workflow's one pass (cage.workflow.plan_run) against the same steps run one by one.

The one pass must give the same field summary, design and current table as the separate
steps (field, plan_design, build_setpoints), and synthesise the IGRF field of the site once
(issue 15: each thing computed once per run). The count is taken on cage.igrf.igrf_ned_nT, the
only place the model is evaluated.
"""
from __future__ import annotations

from pathlib import Path

import numpy as np

import cage.igrf
from cage import geomag, sitefile
from cage.design import design_to_dict

SITE = Path(__file__).resolve().parents[1] / "sites" / "smallsat-lab.toml"


def test_plan_run_equals_the_steps_and_synthesises_the_field_once(monkeypatch):
    from cage.ambient import site_ambient
    from cage.provenance import design_id
    from cage.workflow import build_setpoints, field_summary, plan_design, plan_run

    site = sitefile.load_site(SITE)
    geomag._earth_field.cache_clear()
    calls = []
    real = cage.igrf.igrf_ned_nT

    def counted(*args, **kwargs):
        calls.append(args)
        return real(*args, **kwargs)

    monkeypatch.setattr(cage.igrf, "igrf_ned_nT", counted)
    run = plan_run(site)
    assert len(calls) == 1  # one synthesis (the date and its two bracketing epochs in one call)

    planned = plan_design(site)
    _, table = build_setpoints(planned.design, site)
    summary = field_summary(site, site_ambient(site), design_id(planned.design))
    assert design_to_dict(run.planned.design) == design_to_dict(planned.design)
    assert np.array_equal(run.table.setpoint_A, table.setpoint_A)
    assert run.table.labels == table.labels
    assert run.field_doc == summary
    assert run.warnings == list(planned.cautions) + list(table.warnings)


def test_the_count_would_see_a_second_synthesis(monkeypatch):
    """The counter is live: a date not seen before is synthesised again."""
    import datetime as dt

    geomag._earth_field.cache_clear()
    calls = []
    real = cage.igrf.igrf_ned_nT
    monkeypatch.setattr(cage.igrf, "igrf_ned_nT", lambda *a, **k: calls.append(a) or real(*a, **k))
    geomag.earth_field(10.0, 20.0, 0.0, dt.date(2026, 1, 1))
    geomag.earth_field(10.0, 20.0, 0.0, dt.date(2026, 1, 1))
    geomag.earth_field(10.0, 20.0, 0.0, dt.date(2026, 1, 2))
    assert len(calls) == 2
