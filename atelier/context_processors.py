from django.conf import settings

from atelier.roles import ROLE_LABELS, role_of


def atelier(request):
    role = role_of(getattr(request, "user", None))
    return {
        "ATELIER_NAME": settings.ATELIER_NAME,
        "role": role,
        "role_label": ROLE_LABELS.get(role, ""),
    }
