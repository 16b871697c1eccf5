"""WSGI entry point, served by gunicorn (see `manage.py start`)."""

import os

from django.core.wsgi import get_wsgi_application

os.environ.setdefault("DJANGO_SETTINGS_MODULE", "atelier.settings")

application = get_wsgi_application()

if os.environ.get("ATELIER_WARM_UP") == "1":
    # Set by `manage.py start`: with gunicorn's --preload every worker is
    # forked with the slow imports already done.
    from atelier.warmup import warm_up

    warm_up()
