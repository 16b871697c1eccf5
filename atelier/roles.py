"""Staff roles: each member of staff belongs to one group.

- owner: runs the atelier; everything, including staff and base patterns.
- fitter: measures clients, works out and issues plans.
- workroom: reads issued work orders and cutting sheets.

A superuser counts as owner.
"""

from functools import wraps

from django.contrib.auth.views import redirect_to_login
from django.core.exceptions import PermissionDenied

OWNER, FITTER, WORKROOM = "owner", "fitter", "workroom"
ROLES = (OWNER, FITTER, WORKROOM)
ROLE_LABELS = {OWNER: "Owner", FITTER: "Fitter", WORKROOM: "Workroom"}
# Who may change a client's records and issue plans; the workroom reads issued work.
EDITORS = (OWNER, FITTER)


def role_of(user):
    """The user's role name, or None for anonymous, inactive or group-less users."""
    if user is None or not user.is_authenticated or not user.is_active:
        return None
    if user.is_superuser:
        return OWNER
    cached = getattr(user, "_atelier_role", False)
    if cached is not False:
        return cached
    names = set(user.groups.values_list("name", flat=True))
    role = next((role for role in ROLES if role in names), None)
    user._atelier_role = role
    return role


def role_required(*roles):
    """Let only staff with one of ``roles`` use the view; others get 403."""
    unknown = set(roles) - set(ROLES)
    if not roles or unknown:
        raise ValueError(f"role_required needs role names from {ROLES}, got {roles!r}.")

    def decorator(view):
        @wraps(view)
        def wrapper(request, *args, **kwargs):
            if not request.user.is_authenticated:
                return redirect_to_login(request.get_full_path())
            if role_of(request.user) not in roles:
                raise PermissionDenied("Your role in the atelier does not allow this.")
            return view(request, *args, **kwargs)

        return wrapper

    return decorator
