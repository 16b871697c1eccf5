"""Archives written safely: a temporary file beside the target, private to the atelier's account,
renamed into place only when complete, never over a file that exists."""

import os
import tempfile
from pathlib import Path

FORMAT_VERSION = 1


class SafetyError(Exception):
    """The operation was refused or cannot go on; the message says why in plain words."""


def new_file(out: Path) -> Path:
    """A temporary file beside ``out``, to be renamed into place when complete."""
    out = Path(out)
    if out.exists():
        raise SafetyError(f"{out} exists already; choose another name (nothing is overwritten).")
    out.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(dir=out.parent, prefix=f".{out.name}.", suffix=".part")
    os.close(fd)
    os.chmod(tmp, 0o600)  # personal data: readable by the atelier's account only
    return Path(tmp)


def finish(tmp: Path, out: Path) -> None:
    # os.link refuses to replace a file made meanwhile; the temporary name goes either way.
    try:
        os.link(tmp, out)
    except FileExistsError:
        raise SafetyError(f"{out} appeared while writing; nothing is overwritten.") from None
    finally:
        tmp.unlink(missing_ok=True)
