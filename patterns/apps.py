from django.apps import AppConfig


class PatternsConfig(AppConfig):
    name = "patterns"
    verbose_name = "Base patterns"
