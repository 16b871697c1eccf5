"""What the client search matches on: the start of the name, of its later words, of the reference and its number, of the contact.

Each of these is a lower-cased expression with a database index of its own
(``Client.Meta.indexes``), so a search reads a few short stretches of
indexes instead of every client.  The index and the query must use the very
same expression, which is why both take it from here.  See DEVELOPERS.md,
"Search".
"""

from django.db.models import Func, TextField
from django.db.models.functions import Lower

# Characters that start a new word in a name or a reference.
SEPARATORS = (" ", "-")


class After(Func):
    """The text after the first ``separator`` (all of it when there is none).

    The separator is written into the SQL rather than passed as a parameter:
    SQLite matches a query to an index on an expression only when the two
    are written the same, and an index cannot hold a parameter.
    """

    function = "SUBSTR"
    output_field = TextField()

    def __init__(self, expression, separator):
        if separator not in SEPARATORS:
            raise ValueError(f"Words are separated by one of {SEPARATORS!r}, not {separator!r}.")
        self.separator = separator
        super().__init__(expression)

    def as_sql(self, compiler, connection, **extra_context):
        locate = "STRPOS" if connection.vendor == "postgresql" else "INSTR"
        template = f"SUBSTR(%(expressions)s, {locate}(%(expressions)s, '{self.separator}') + 1)"
        sql, params = super().as_sql(compiler, connection, template=template, **extra_context)
        return sql, (*params, *params)  # the expression appears twice


def search_expressions() -> dict:
    """Short name of each searchable start -> its lower-cased expression (indexed as "client_<name>")."""
    return {
        "name": Lower("name"),  # the first name, or the whole name as typed
        "word2": Lower(After("name", " ")),  # the surname of "Hester Quayle"
        "word3": Lower(After(After("name", " "), " ")),  # the surname after a middle name
        "hyphen": Lower(After("name", "-")),  # "Vale" of "Ashdown-Vale"
        "ref": Lower("reference"),
        "refnum": Lower(After("reference", "-")),  # "0103" of "WF-0103"
        "contact": Lower("contact"),  # an e-mail address or telephone number, from its start
    }
