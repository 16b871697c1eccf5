"""The fabric layout's background task (Django's tasks framework, like printing in fittings/tasks.py)."""

from django.tasks import task

from fittings.services.layouts import run_layout_job


@task()
def solve_fabric_layout(job_id: int) -> str:
    return run_layout_job(job_id)
