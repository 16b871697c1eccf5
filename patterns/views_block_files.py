"""Blocks in and out as drawing files: the import page, and a base pattern's pieces as SVG or DXF."""

from django.contrib import messages
from django.http import Http404
from django.shortcuts import redirect, render
from django.views.decorators.http import require_GET

from atelier.roles import EDITORS, ROLES, role_required
from fittings import piece_files
from fittings.views_pieces import file_response
from patterns import selectors
from patterns.core.measures import LEVEL_LABELS
from patterns.forms import BlockImportForm
from patterns.selectors import block_for
from patterns.services import BlockInvalid, save_block


@role_required(*EDITORS)
def block_import(request):
    """Take in a DXF or SVG drawing as a new base pattern; nothing is kept from a file that is refused."""
    if request.method == "POST":
        form = BlockImportForm(request.POST, request.FILES)
        if form.is_valid():
            try:
                pattern = save_block(form.cleaned_data["block"])
            except BlockInvalid as exc:
                form.add_error(None, str(exc))
            else:
                messages.success(request, f"{pattern} was imported as a new base pattern.")
                return redirect("patterns:pattern_files", pattern.pk)
        return render(request, "patterns/block_import.html", {"form": form}, status=400)
    return render(request, "patterns/block_import.html", {"form": BlockImportForm()})


@require_GET
@role_required(*ROLES)
def pattern_files(request, pk):
    """A base pattern's levels and panel widths, with its pieces to download (``block`` is taken by the
    template language inside ``{% block %}``, hence ``pattern_block``)."""
    pattern = _pattern(pk)
    block = block_for(pattern)
    rows = [
        (LEVEL_LABELS.get(lv.name, lv.name), lv.y, [round(p.width(lv.name), 1) for p in block.panels])
        for lv in block.levels
    ]
    return render(request, "patterns/pattern_files.html", {"pattern": pattern, "pattern_block": block, "rows": rows})


@require_GET
@role_required(*ROLES)
def pattern_pieces(request, pk, fmt):
    return file_response(piece_files.pattern_pieces(_pattern(pk), fmt))


def _pattern(pk):
    found = selectors.pattern(pk)
    if found is None:
        raise Http404("No such base pattern.")
    return found
