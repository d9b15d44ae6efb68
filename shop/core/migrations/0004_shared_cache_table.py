"""The cache table every app process shares (settings.CACHES, DatabaseCache)."""

from django.core.management.commands.createcachetable import Command as CreateCacheTable
from django.db import migrations

# Fixed here, not read from the settings: a migration must do the same thing in every release.
CACHE_TABLE = "shop_cache"


def create_cache_table(apps, schema_editor):
    """What `manage.py createcachetable` does for the table, on this migration's database."""
    command = CreateCacheTable()
    command.verbosity = 0
    command.create_table(schema_editor.connection.alias, CACHE_TABLE, dry_run=False)


def drop_cache_table(apps, schema_editor):
    schema_editor.execute(f"DROP TABLE IF EXISTS {schema_editor.quote_name(CACHE_TABLE)}")


class Migration(migrations.Migration):
    dependencies = [("core", "0003_api_token_hashed")]

    operations = [migrations.RunPython(create_cache_table, drop_cache_table)]
