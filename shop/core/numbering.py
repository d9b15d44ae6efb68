"""Human-readable numbers (year plus sequence) handed out safely under concurrency."""

from __future__ import annotations

from django.db import IntegrityError, models, transaction
from django.db.models import F


class YearCounter(models.Model):
    """Abstract base: the last sequence number handed out in a year for one series."""

    year = models.PositiveSmallIntegerField(primary_key=True)
    last = models.PositiveIntegerField(default=0)

    class Meta:
        abstract = True

    def __str__(self) -> str:
        return f"{self.year}: {self.last}"


def next_in_year(counter_model: type[YearCounter], *, year: int) -> int:
    """Take the next sequence number of `year`; the counter row stays locked until commit.

    Must run inside a transaction. The first number of a year creates the row; when two
    callers race to create it, the loser locks the winner's row instead.
    """
    if not counter_model.objects.select_for_update().filter(year=year).exists():
        try:
            with transaction.atomic():
                counter_model.objects.create(year=year, last=0)
        except IntegrityError:
            pass
        counter_model.objects.select_for_update().get(year=year)
    counter_model.objects.filter(year=year).update(last=F("last") + 1)
    return counter_model.objects.get(year=year).last
