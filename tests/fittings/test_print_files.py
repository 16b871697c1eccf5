"""A print's files, one row per document (fittings.models.PrintFile), and the registry of documents."""

import pytest
from django.core.files.base import ContentFile
from django.db import connection
from django.db.migrations.executor import MigrationExecutor

from fittings.models import KIND_DOCUMENTS, PrintFile, PrintJob, PrintKind, PrintStatus
from fittings.printing.registry import DOCUMENTS
from fittings.services.printing import clear_old_files

BEFORE, AFTER = ("fittings", "0006_fabric_layout"), ("fittings", "0007_print_files")


def test_it_names_a_registered_document_for_every_kind_of_print():
    assert set(KIND_DOCUMENTS) == set(PrintKind.values)
    for slugs in KIND_DOCUMENTS.values():
        assert slugs and all(slug in DOCUMENTS for slug in slugs)
    assert KIND_DOCUMENTS[PrintKind.BOTH] == ("work-order", "cutting-sheet")


def _migrate(target):
    executor = MigrationExecutor(connection)
    executor.migrate([target])
    return MigrationExecutor(connection).loader.project_state([target]).apps


@pytest.mark.django_db(transaction=True)
def test_it_moves_the_file_names_into_rows_and_back(demo_atelier):
    revision_id = demo_atelier_revision()
    try:
        old = _migrate(BEFORE)
        OldJob = old.get_model("fittings", "PrintJob")
        both = OldJob.objects.create(
            revision_id=revision_id,
            status="done",
            kind="both",
            work_order="print/2026/01/aa.pdf",
            cutting_sheet="print/2026/01/bb.pdf",
        )
        one = OldJob.objects.create(
            revision_id=revision_id, status="done", kind="cutting_sheet", cutting_sheet="print/2026/01/cc.pdf"
        )
        none = OldJob.objects.create(revision_id=revision_id, status="failed", kind="both")

        new = _migrate(AFTER)
        rows = set(new.get_model("fittings", "PrintFile").objects.values_list("job_id", "document", "file"))
        assert rows == {
            (both.pk, "work-order", "print/2026/01/aa.pdf"),
            (both.pk, "cutting-sheet", "print/2026/01/bb.pdf"),
            (one.pk, "cutting-sheet", "print/2026/01/cc.pdf"),
        }

        old = _migrate(BEFORE)
        back = {
            j.pk: (j.work_order.name, j.cutting_sheet.name) for j in old.get_model("fittings", "PrintJob").objects.all()
        }
        assert back[both.pk] == ("print/2026/01/aa.pdf", "print/2026/01/bb.pdf")
        assert back[one.pk] == ("", "print/2026/01/cc.pdf")
        assert back[none.pk] == ("", "")
    finally:
        _migrate(AFTER)


def demo_atelier_revision() -> int:
    from fittings.models import PlanRevision

    return PlanRevision.objects.order_by("pk").values_list("pk", flat=True).first()


@pytest.mark.django_db
def test_it_keeps_one_file_per_document_and_clears_them_with_their_rows(demo_atelier):
    from datetime import timedelta

    from django.db import IntegrityError, transaction
    from django.utils import timezone

    revision_id = demo_atelier_revision()
    job = PrintJob.objects.create(
        revision_id=revision_id, status=PrintStatus.DONE, finished_at=timezone.now() - timedelta(days=40)
    )
    kept = PrintFile(job=job, document="work-order")
    kept.file.save("w.pdf", ContentFile(b"%PDF-1.4 test\n"), save=True)
    path = kept.file.path
    assert job.work_order and not job.cutting_sheet and kept.label == "Work order"
    with pytest.raises(IntegrityError), transaction.atomic():
        PrintFile.objects.create(job=job, document="work-order", file="print/other.pdf")
    assert clear_old_files(older_than=timedelta(days=30)) == 1
    assert not PrintFile.objects.filter(job=job).exists()
    import os

    assert not os.path.exists(path)
    assert PrintJob.objects.filter(pk=job.pk).exists()
    assert clear_old_files(older_than=timedelta(days=30)) == 0
