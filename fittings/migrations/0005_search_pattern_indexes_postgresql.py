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


def on_postgresql(action):
    """A migration step that applies ``action(schema_editor, Client, index)`` to each index, on PostgreSQL only."""
    def step(apps, schema_editor):
        if schema_editor.connection.vendor == "postgresql":
            client = apps.get_model("fittings", "Client")
            for index in pattern_indexes():
                action(schema_editor, client, index)
    return step


create = on_postgresql(lambda editor, model, index: editor.add_index(model, index))
drop = on_postgresql(lambda editor, model, index: editor.remove_index(model, index))


class Migration(migrations.Migration):
    dependencies = [("fittings", "0004_search_and_lookup_indexes")]

    operations = [migrations.RunPython(create, drop, elidable=False)]
