"""Taylor-model region of attraction of the swing equation towards its simulated region.

The true region is simulated by ``tests/perf/bench_swing.py`` (computed:
classical Runge–Kutta of order 4, step 0.01, horizon 60); the certified set
must lie inside it and cover a fair share of it. The fast case of this family
is the audited disc in ``test_taylor_audit.py``.
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pytest

import proofkit
from proofkit.audit import audit_certificate
from proofkit.certificate import claim_entry, model_section, new_certificate
from proofkit.proofs.taylor_model import region_search

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "perf"))
from bench_swing import SOURCE, true_region


@pytest.mark.slow
def test_region_search_covers_part_of_the_simulated_region_and_audits() -> None:
    pts, inside = true_region(41)
    model = proofkit.parse(SOURCE, "swing.pk")
    claim = model.claims[0]
    target = pts[inside][:: max(1, int(inside.sum()) // 300)]
    res = region_search(model, claim, target, degree=4, orders=(4, 5), rounds=4)
    assert res.evidence is not None, res.reason
    theorem = "taylor-model-region-of-attraction"
    entry = claim_entry(
        model, claim, "proved", method="taylor-model", theorem=theorem, evidence=res.evidence
    )
    verdict = audit_certificate(new_certificate(model_section(model), [entry]), 120).claims[0]
    assert verdict.status == "proved", verdict.message
    v = np.zeros(len(pts))
    for exps, coef in res.evidence["V"]:
        num, _, den = coef.partition("/")
        v += int(num) / int(den or 1) * np.prod(pts ** np.array(exps), axis=1)
    num, _, den = res.evidence["numbers"]["level"].partition("/")
    cert = v <= int(num) / int(den or 1)
    assert not (cert & ~inside).any()  # a certified point that diverges: impossible
    assert (cert & inside).sum() / inside.sum() > 0.40  # measured about 50 %
