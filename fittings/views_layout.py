"""The fabric layout of a revision: ask for one, watch the solver, see the drawing and the length."""

from django import forms
from django.core.exceptions import PermissionDenied
from django.http import Http404
from django.shortcuts import redirect, render
from django.utils import timezone
from django.views.decorators.http import require_GET, require_POST

from atelier.roles import ROLES, WORKROOM, role_of, role_required
from fittings import selectors
from fittings.fabric import job_layers, latest_layout, layer_rows
from fittings.models import LayoutStatus
from fittings.services.layouts import request_layout, settle_abandoned
from fittings.services.printing import NO_WORKER_AFTER
from patterns.core.layout import (
    DEFAULT_BUDGET_S,
    DEFAULT_GAP_MM,
    DEFAULT_WIDTH_MM,
    LAYERS,
    MAX_BUDGET_S,
    LayerRequest,
    LayoutError,
    default_layers,
)
from patterns.core.units import LengthError, format_length, format_with_unit, parse_length


class LayoutForm(forms.Form):
    """Which layers, how wide each fabric is and the gap, typed in the plan's unit; the solver's time."""

    gap = forms.CharField(label="Gap between pieces", max_length=32)
    seconds = forms.IntegerField(
        label="Time for the search (s)", min_value=1, max_value=MAX_BUDGET_S, initial=DEFAULT_BUDGET_S
    )

    def __init__(self, *args, unit: str, garment: str = "", **kwargs):
        super().__init__(*args, **kwargs)
        self.unit = unit
        chosen = default_layers(garment)
        for code, label in LAYERS.items():
            self.fields[f"use_{code}"] = forms.BooleanField(label=label, required=False, initial=code in chosen)
            self.fields[f"width_{code}"] = forms.CharField(
                label=f"{label} width", max_length=32, required=False, initial=format_length(DEFAULT_WIDTH_MM, unit)
            )
        self.fields["gap"].initial = format_length(DEFAULT_GAP_MM, unit)

    def layer_fields(self):
        return [(self[f"use_{code}"], self[f"width_{code}"]) for code in LAYERS]

    def _length(self, name: str) -> float | None:
        try:
            return float(parse_length(self.cleaned_data.get(name, ""), self.unit))
        except LengthError as exc:
            self.add_error(name, str(exc))
            return None

    def clean(self):
        cleaned = super().clean()
        layers = []
        for code in LAYERS:
            if cleaned.get(f"use_{code}"):
                width = self._length(f"width_{code}")
                if width is not None:
                    layers.append(LayerRequest(code, width))
        if "gap" in cleaned:
            cleaned["gap_mm"] = self._length("gap")
        if not any(cleaned.get(f"use_{code}") for code in LAYERS):
            raise forms.ValidationError("Choose at least one fabric layer.")
        cleaned["layers"] = layers
        return cleaned


def _revision(request, pk, number):
    plan = selectors.plan_for_page(pk)
    revision = selectors.plan_revision(plan, number) if plan is not None else None
    if revision is None:
        raise Http404("No such revision.")
    if not revision.is_issued and role_of(request.user) == WORKROOM:
        raise PermissionDenied("This revision is a draft: the workroom lays out a revision once it is issued.")
    return plan, revision


def _context(plan, revision, form=None, job=None):
    _, block, options = selectors.revision_inputs(revision)
    job = job if job is not None else latest_layout(revision)
    if job is not None:
        job = settle_abandoned(job)
    form = form or LayoutForm(unit=options.unit, garment=block.garment, initial=_initial(job, options.unit))
    no_worker = bool(job and job.status == LayoutStatus.QUEUED and timezone.now() - job.created_at > NO_WORKER_AFTER)
    return {
        "plan": plan,
        "client": plan.client,
        "revision": revision,
        "form": form,
        "job": job,
        "no_worker": no_worker,
        "layers": layer_rows(job_layers(job), options.unit) if job is not None else [],
        "unit": options.unit,
        "best_so_far": (
            format_with_unit(job.best_length_mm, options.unit)
            if job is not None and job.best_length_mm and not job.is_finished
            else ""
        ),
    }


def _initial(job, unit):
    """A new request starts from the last one's choices."""
    if job is None:
        return {}
    initial = {f"use_{code}": False for code in LAYERS}
    for entry in job.layers:
        initial[f"use_{entry['layer']}"] = True
        initial[f"width_{entry['layer']}"] = format_length(entry["width_mm"], unit)
    initial["gap"] = format_length(job.gap_mm, unit)
    initial["seconds"] = job.budget_s
    return initial


@require_GET
@role_required(*ROLES)
def fabric_layout(request, pk, number):
    """The layout page; to htmx (the revision page's card, the progress while searching) its fragment only."""
    plan, revision = _revision(request, pk, number)
    partial = request.htmx and not request.htmx.history_restore_request
    template = "fittings/_fabric_layout_panel.html" if partial else "fittings/fabric_layout.html"
    return render(request, template, _context(plan, revision))


@require_POST
@role_required(*ROLES)
def fabric_layout_start(request, pk, number):
    """Ask for a layout: the rows layout is stored at once, the solver queued; a bad width or gap is refused."""
    plan, revision = _revision(request, pk, number)
    _, block, options = selectors.revision_inputs(revision)
    form = LayoutForm(request.POST, unit=options.unit, garment=block.garment)
    if form.is_valid():
        try:
            request_layout(
                revision=revision,
                user=request.user,
                layers=form.cleaned_data["layers"],
                gap_mm=form.cleaned_data["gap_mm"],
                budget_s=form.cleaned_data["seconds"],
            )
        except LayoutError as exc:
            form.add_error(None, str(exc))
        else:
            return redirect("fittings:fabric_layout", plan.pk, revision.number)
    return render(request, "fittings/fabric_layout.html", _context(plan, revision, form=form), status=400)
