"""Records written once: the model and its querysets refuse updates and deletes."""

from __future__ import annotations

from django.core.exceptions import ValidationError
from django.db import models


class WriteOnceQuerySet(models.QuerySet):
    """Refuses bulk updates and deletes: a record of what happened is never rewritten."""

    def update(self, **kwargs):
        raise ValidationError(f"{self.model._meta.verbose_name_plural} are never changed.")

    def delete(self):
        raise ValidationError(f"{self.model._meta.verbose_name_plural} are never deleted.")


class AppendOnly(models.Model):
    """Abstract base for records that are written once: updates and deletes are refused."""

    objects = WriteOnceQuerySet.as_manager()

    class Meta:
        abstract = True

    def save(self, *args, **kwargs):
        if not self._state.adding:
            raise ValidationError(f"A {self._meta.verbose_name} is never changed once written.")
        super().save(*args, **kwargs)

    def delete(self, *args, **kwargs):
        raise ValidationError(f"A {self._meta.verbose_name} is never deleted.")
