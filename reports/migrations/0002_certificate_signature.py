"""Certificates carry a keyed signature; those issued before are signed once, as they stand."""

from django.db import migrations, models


def sign_issued(apps, schema_editor):
    """Sign every certificate already issued with the current RECORD_SIGNING_KEY.

    This vouches for the rows as they are at upgrade time: run `certificates_verify` before
    upgrading to know they are as issued.
    """
    from reports.signing import certificate_sign

    Certificate = apps.get_model("reports", "Certificate")
    for certificate in Certificate.objects.filter(signature="").iterator():
        signature = certificate_sign(
            number=certificate.number,
            snapshot=certificate.snapshot,
            pdf_sha256=certificate.pdf_sha256,
        )
        # Historical models are plain models: the append-only guard does not apply here.
        Certificate.objects.filter(pk=certificate.pk).update(signature=signature)


class Migration(migrations.Migration):
    dependencies = [("reports", "0001_initial")]

    operations = [
        migrations.AddField(
            model_name="certificate",
            name="signature",
            field=models.CharField(
                default="",
                editable=False,
                help_text=(
                    "HMAC-SHA256 of number, snapshot and PDF under RECORD_SIGNING_KEY "
                    "(reports.signing)."
                ),
                max_length=100,
            ),
            preserve_default=False,
        ),
        migrations.RunPython(sign_issued, migrations.RunPython.noop),
    ]
