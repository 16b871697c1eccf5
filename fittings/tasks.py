"""Background work, through Django's tasks framework: the task runs what its service says."""

from django.tasks import task

from fittings.services.layouts import run_layout_job
from fittings.services.printing import run_print_job


@task()
def render_print_job(job_id: int) -> str:
    return run_print_job(job_id)


@task()
def solve_fabric_layout(job_id: int) -> str:
    return run_layout_job(job_id)
