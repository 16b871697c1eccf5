"""What the commands that copy, replace or erase the atelier's records share."""

import getpass

from django.core.management.base import BaseCommand, CommandError

from fittings.services.files import SafetyError


def actor(command: str) -> str:
    """The name the audit trail keeps for a command run from the shell, where no one is signed in."""
    try:
        return f"manage.py {command} (run as {getpass.getuser()})"
    except (KeyError, OSError):
        return f"manage.py {command}"


def listed(counts: dict) -> str:
    return ", ".join(f"{count} {name}" for name, count in counts.items())


class RecordsCommand(BaseCommand):
    """A step the services refuse (``SafetyError``) ends the command with its message, not a traceback.

    With ``confirm`` set the command takes ``--yes`` (``confirm`` is its help) and, without it,
    only says what it would do.
    """

    confirm = ""

    def add_arguments(self, parser):
        if self.confirm:
            parser.add_argument("--yes", action="store_true", help=self.confirm)

    def execute(self, *args, **options):
        try:
            return super().execute(*args, **options)
        except SafetyError as exc:
            raise CommandError(str(exc)) from None
