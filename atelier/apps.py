from django.apps import AppConfig


class AtelierConfig(AppConfig):
    name = "atelier"
    verbose_name = "Atelier"
