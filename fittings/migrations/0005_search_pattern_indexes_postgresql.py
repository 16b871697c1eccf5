"""PostgreSQL only: the client search's starts as `text_pattern_ops` indexes.

PostgreSQL sorts text by the language's rules, and an index in that order
cannot serve ``LIKE 'thor%'``; the search asks PostgreSQL for plain "starts
with" (fittings/selectors.py), so each start gets an index in code-point
order as well.  SQLite's search reads ranges of the indexes of 0004.  The
indexes live outside the model state: they are a PostgreSQL detail, and
SQLite has no operator classes.
"""

from django.contrib.postgres.indexes import OpClass
from django.db import migrations, models

from fittings.search import search_expressions


def pattern_indexes():
    return [models.Index(OpClass(expression, name="text_pattern_ops"), name=f"client_{key}_pattern")
            for key, expression in search_expressions().items()]


def create(apps, schema_editor):
    if schema_editor.connection.vendor != "postgresql":
        return
    client = apps.get_model("fittings", "Client")
    for index in pattern_indexes():
        schema_editor.add_index(client, index)


def drop(apps, schema_editor):
    if schema_editor.connection.vendor != "postgresql":
        return
    client = apps.get_model("fittings", "Client")
    for index in pattern_indexes():
        schema_editor.remove_index(client, index)


class Migration(migrations.Migration):
    dependencies = [("fittings", "0004_search_and_lookup_indexes")]

    operations = [migrations.RunPython(create, drop, elidable=False)]
