"""The client search reads indexes, not every client, on both databases."""

import pytest
from django.db import connection, transaction
from django.test.utils import CaptureQueriesContext

from fittings import selectors
from fittings.models import Client
from fittings.search import search_expressions

pytestmark = pytest.mark.django_db


def search_sql(query: str) -> str:
    with CaptureQueriesContext(connection) as seen:
        selectors.client_search(query)
    (sql,) = [
        q["sql"]
        for q in seen.captured_queries
        if "starts" in q["sql"] or "LIKE" in q["sql"].upper() or ">=" in q["sql"]
    ]
    return sql


def test_it_reads_every_start_of_a_search_from_an_index_of_its_own():
    Client.objects.bulk_create([Client(reference=f"IX-{i}", name=f"Ottoline Brereton {i}") for i in range(50)])
    Client.objects.bulk_create(
        [Client(reference=f"OT-{i}", name=f"Client {i} Surname{i % 97}", contact=f"0{i}") for i in range(3000)]
    )
    sql = search_sql("brer")
    with transaction.atomic(), connection.cursor() as cursor:
        cursor.execute("ANALYZE fittings_client")  # as a database in use would have
        if connection.vendor == "postgresql":
            # Only to ask which indexes can serve the query: with no table scan allowed, the plan names them.
            cursor.execute("SET LOCAL enable_seqscan = off")
            cursor.execute("EXPLAIN " + sql)
            plan = "\n".join(row[0] for row in cursor.fetchall())
            cursor.execute("SELECT datcollate FROM pg_database WHERE datname = current_database()")
            (collation,) = cursor.fetchone()
            # Only in the C collation can an ordinary index serve LIKE 'brer%' (PostgreSQL documentation,
            # "Operator Classes and Operator Families"); in any other, the pattern indexes must.
            expected = [
                f"client_{key}{'' if collation in ('C', 'POSIX') else '_pattern'}" for key in search_expressions()
            ]
            if collation in ("C", "POSIX"):
                plan = plan.replace("_pattern ", " ")
        else:
            cursor.execute("EXPLAIN QUERY PLAN " + sql)
            plan = "\n".join(str(row[-1]) for row in cursor.fetchall())
            expected = [f"client_{key}" for key in search_expressions()]
    for index in expected:
        assert f"{index} " in plan + " " or f"{index}\n" in plan, plan
    assert "SCAN fittings_client\n" not in plan + "\n" and "Seq Scan" not in plan, plan
