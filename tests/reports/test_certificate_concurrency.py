"""Eight leads issuing at once get eight distinct certificate numbers (PostgreSQL, threads)."""

from __future__ import annotations

import pytest

from reports import services
from reports.models import Certificate
from tests.intake.test_job_numbers import run_in_threads


@pytest.mark.postgres
@pytest.mark.django_db(transaction=True)
def test_eight_parallel_issues_never_share_a_number(closed_test, staff):
    results = run_in_threads(
        8, lambda: services.certificate_issue(job=closed_test.job, issued_by=staff["lead"])
    )
    assert not [r for r in results if isinstance(r, Exception)], results
    numbers = list(Certificate.objects.values_list("number", flat=True))
    assert len(numbers) == len(set(numbers)) == 8
