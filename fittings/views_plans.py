"""Plans at the fitting: choose a base pattern, set ease, watch the allotments change, save, issue, pin."""

from django.contrib import messages
from django.core.exceptions import PermissionDenied
from django.http import Http404, HttpResponse
from django.shortcuts import redirect, render
from django.urls import reverse
from django.utils.csp import CSP
from django.utils.http import urlencode
from django.views.decorators.csp import csp_override
from django.views.decorators.http import require_GET, require_POST

from atelier.roles import EDITORS, ROLES, WORKROOM, role_of, role_required
from fittings import previews, selectors
from fittings.forms import FittingImportForm, NewPlanForm, PinForm, PlanOptionsForm, cell_name
from fittings.services import ConcurrentEdit
from fittings.services import plans as plan_services
from fittings.tables import plan_table
from fittings.wording import findings_for_screen, import_refusal, in_unit
from patterns.core.fitting import allot_measurements
from patterns.core.measures import LEVEL_LABELS
from patterns.core.report import direction
from patterns.core.units import format_length, format_with_unit
from patterns.selectors import active_patterns


def _found(obj, what: str):
    if obj is None:
        raise Http404(f"No such {what}.")
    return obj


def _session(pk):
    return _found(selectors.session_with_readings(pk), "session")


def _plan(pk):
    return _found(selectors.plan_for_page(pk), "plan")


def _plan_and_latest(pk, page=True):
    """The plan and its newest revision in one query (the live screens ask at every keystroke)."""
    found = selectors.plan_with_latest(pk, page=page)
    if found is None:
        raise Http404("No such plan.")
    return found


def _revision(plan, number, user=None):
    # Inputs and result stay in the database unless the decoded copy is missing (selectors.revision_inputs).
    revision = _found(selectors.plan_revision(plan, number), "revision")
    if user is not None and revision.status != "issued" and role_of(user) == WORKROOM:
        raise PermissionDenied("This revision is a draft: the workroom sees a revision once it is issued.")
    return revision


@role_required(*EDITORS)
def plan_new(request, session_pk):
    """Pick a base pattern for a session's readings; the best size of each run comes first, with why."""
    session = _session(session_pk)
    based_on = None
    if request.GET.get("from") or request.POST.get("from"):
        based_on = _found(
            selectors.client_revision(session.client, _int(request.GET.get("from") or request.POST.get("from"))),
            "revision",
        )
    patterns = active_patterns().order_by("name", "size_order")
    # The garment being planned: the one carried over, else the client's last plan's, else the best size's.
    earlier = based_on.plan if based_on else selectors.latest_plan(session.client)
    garment = earlier.base_pattern.garment if earlier else None
    suggestions = selectors.suggestions_for_session(session, patterns, garment=garment)
    unit = session.unit
    for_page = [
        {
            "label": s.label,
            "garment": s.garment,
            "largest": format_with_unit(s.largest_edge_mm, unit),
            "total": format_with_unit(s.total_edges_mm, unit),
            "errors": s.errors,
            "same": s.garment == (suggestions[0].garment if suggestions else None),
        }
        for s in suggestions
    ]
    if request.method == "POST":
        form = NewPlanForm(request.POST, patterns=patterns)
        if form.is_valid():
            plan = plan_services.start_plan(
                client=session.client,
                session=session,
                pattern=form.cleaned_data["base_pattern"],
                garment=form.cleaned_data["garment"],
                user=request.user,
                based_on=based_on,
            )
            return redirect("fittings:plan_edit", plan.pk)
        status = 400
    else:
        initial = {"garment": based_on.plan.garment if based_on else "Corset"}
        if suggestions:
            initial["base_pattern"] = suggestions[0].pattern_pk
        form = NewPlanForm(initial=initial, patterns=patterns)
        status = 200
    context = {
        "session": session,
        "client": session.client,
        "form": form,
        "suggestions": suggestions,
        "based_on": based_on,
        "sizes": for_page,
        "reason": in_unit(suggestions[0].reason, unit) if suggestions else "",
        "others": any(not row["same"] for row in for_page),
    }
    return render(request, "fittings/plan_new.html", context, status=status)


def _int(value):
    try:
        return int(value)
    except (TypeError, ValueError):
        raise Http404("No such revision.") from None


@role_required(*ROLES)
def plan_edit(request, pk):
    """The live plan: options on the left, the allotment table and preview on the right."""
    plan, latest = _plan_and_latest(pk)
    if role_of(request.user) == WORKROOM and request.method != "POST":
        # The workroom cuts from issued revisions; the live plan (a draft in the making) is not for it.
        issued = plan.revisions.filter(status="issued").order_by("-number").values_list("number", flat=True).first()
        if issued is None:
            raise PermissionDenied("Nothing of this plan is issued to the workroom yet.")
        return redirect("fittings:revision_detail", plan.pk, issued)
    values, block, options = selectors.revision_inputs(latest)
    unit = options.unit
    can_edit = _can_edit(request.user)
    if request.method == "POST":
        if not can_edit:
            return HttpResponse("Your role can read plans but not change them.", status=403)
        form = PlanOptionsForm(request.POST, block=block, unit=unit)
        if not form.is_valid():
            return _plan_page(request, plan, latest, form, block, values, None, status=400)
        expected = form.cleaned_data.get("version") or plan.version
        try:
            revision = plan_services.save_revision(
                plan=plan,
                options=form.options(),
                user=request.user,
                expected_version=expected,
            )
        except ConcurrentEdit as exc:
            plan.refresh_from_db()
            return _plan_page(
                request, plan, selectors.latest_revision(plan), form, block, values, None, status=409, conflict=str(exc)
            )
        messages.success(request, f"Saved as revision {revision.number}.")
        return redirect("fittings:revision_detail", plan.pk, revision.number)
    form = PlanOptionsForm(
        initial={**PlanOptionsForm.initial_for(options, block), "version": plan.version}, block=block, unit=unit
    )
    return _plan_page(request, plan, latest, form, block, values, selectors.revision_result(latest))


@require_POST
@role_required(*EDITORS)
def plan_recompute(request, pk):
    """Recompute from unsaved form values; htmx gets the table fragment, a plain post the whole page."""
    plan, latest = _plan_and_latest(pk, page=not request.htmx)
    values, block, options = selectors.revision_inputs(latest)
    form = PlanOptionsForm(request.POST, block=block, unit=options.unit)
    if not form.is_valid():
        if request.htmx:
            # Swapped by htmx (base.html's responseHandling): the message at the top of the table, the fields
            # beside the options marked out of band, the cells' own errors in the saved revision's table.
            context = _result_context(request, plan, form, block, selectors.revision_result(latest), options)
            context.update(
                {
                    "invalid": True,
                    "oob": True,
                    "option_fields": _option_fields(form),
                    "problems": _problems(form, block),
                }
            )
            return render(request, "fittings/plan_edit.html#plan-result", context, status=422)
        return _plan_page(request, plan, latest, form, block, values, None, status=400)
    result = allot_measurements(block, values, form.options())
    if request.htmx:
        context = _result_context(request, plan, form, block, result, form.options())
        context.update({"oob": True, "option_fields": _option_fields(form)})
        return render(request, "fittings/plan_edit.html#plan-result", context)
    return _plan_page(request, plan, latest, form, block, values, result, options=form.options())


# The preview opened on its own (a long press, "open image") is an SVG document: its drawing is styled by its
# own <style> and style attributes, which the site's policy (style-src 'self') would block, leaving a black
# shape.  Its response alone allows inline styles; it may run no script and load nothing.
SVG_CSP = {
    "default-src": [CSP.NONE],
    "style-src": [CSP.UNSAFE_INLINE],
    "img-src": ["data:"],
    "font-src": [CSP.NONE],
    "script-src": [CSP.NONE],
    "base-uri": [CSP.NONE],
    "form-action": [CSP.NONE],
    "frame-ancestors": [CSP.SELF],
}


@require_GET
@role_required(*EDITORS)
@csp_override(SVG_CSP)
def plan_preview(request, pk):
    """The panel preview for the values in the query string (the live form), as SVG; cached by input."""
    block, result = _live_result(request, pk)
    return _svg_response(*previews.preview_lookup(block, result, result.unit))


def _option_fields(form):
    """The option fields beside the table (their error slots are refreshed with every live answer)."""
    return [*form.ease_fields(), form["lacing_gap"], form["centre_front_width"], form["policy"], form["step"]]


def _problems(form, block) -> list[str]:
    """Each refused value named as the fitter sees it: the option's label, or the cell's seam, edge and level."""
    names = {}
    for i, seam in enumerate(block.seams):
        for level in block.level_names:
            for edge, panel in enumerate((seam.front_panel, seam.back_panel)):
                names[cell_name(i, level, edge)] = (
                    f"{seam.name}, {panel} edge, {LEVEL_LABELS.get(level, level).lower()}"
                )
    out = []
    for name, errors in form.errors.items():
        if name == "__all__":
            out += list(errors)
            continue
        label = names.get(name) or form.fields[name].label or name
        out.append(f"{label}: {errors[0]}")
    return out


def _live_result(request, pk):
    """The allotment for the live form's values in the query string (the saved choices where they do not read)."""
    plan, latest = _plan_and_latest(pk, page=False)
    values, block, options = selectors.revision_inputs(latest)
    form = PlanOptionsForm(request.GET, block=block, unit=options.unit)
    if form.is_valid():
        options = form.options()
    return block, allot_measurements(block, values, options)


def _svg_response(svg: str, cached: bool):
    response = HttpResponse(svg, content_type="image/svg+xml")
    response["Cache-Control"] = "private, max-age=3600"
    # W3C Server Timing: lets the browser's tools (and bench/run_all.py) see whether it was drawn or reused.
    response["Server-Timing"] = f"preview;desc={'hit' if cached else 'miss'}"
    return response


def _can_edit(user):
    from atelier.roles import role_of

    return role_of(user) in EDITORS


def _result_context(request, plan, form, block, result, options):
    preview_query = (
        urlencode([(k, v) for k, values in form.data.lists() if k != "csrfmiddlewaretoken" for v in values])
        if form.is_bound
        else ""
    )
    return {
        "plan": plan,
        "form": form,
        "block": block,
        "result": result,
        "table": plan_table(block, result, form=form),
        "preview_url": reverse("fittings:plan_preview", args=[plan.pk])
        + (f"?{preview_query}" if preview_query else ""),
        "checks_url": reverse("fittings:plan_checks", args=[plan.pk]) + (f"?{preview_query}" if preview_query else ""),
        "unit": options.unit,
    }


def _plan_page(request, plan, latest, form, block, values, result, status=200, conflict=None, options=None):
    if result is None and form.is_bound and form.is_valid():
        result = allot_measurements(block, values, form.options())
        options = form.options()
    if result is None:
        result = selectors.revision_result(latest)
    if options is None:
        options = selectors.revision_inputs(latest)[2]
    context = _result_context(request, plan, form, block, result, options)
    if not form.is_bound:
        context["preview_url"] = reverse("fittings:revision_preview", args=[plan.pk, latest.number])
        context["checks_url"] = reverse("fittings:revision_checks", args=[plan.pk, latest.number])
    context.update(
        {
            "client": plan.client,
            "session": plan.session,
            "latest": latest,
            "conflict": conflict,
            "can_edit": _can_edit(request.user),
            "values": values,
            "photos": plan.session.photos.all(),
            "ease_fields": form.ease_fields(),
            "problems": _problems(form, block) if form.is_bound else [],
            "bust_span_text": format_with_unit(values["bust_span"], options.unit) if values.get("bust_span") else "",
        }
    )
    return render(request, "fittings/plan_edit.html", context, status=status)


@role_required(*ROLES)
def revision_detail(request, pk, number):
    """One saved revision, read-only: what the workroom cuts from."""
    plan = _plan(pk)
    revision = _revision(plan, number, request.user)
    values, block, options = selectors.revision_inputs(revision)
    result = selectors.revision_result(revision)
    workroom = role_of(request.user) == WORKROOM
    revisions = plan.revisions.defer("inputs", "result").order_by("-number")
    context = {
        "workroom": workroom,
        "plan": plan,
        "client": plan.client,
        "revision": revision,
        "block": block,
        "result": result,
        "table": plan_table(block, result),
        "unit": options.unit,
        "options": options,
        "values": values,
        "preview_url": reverse("fittings:revision_preview", args=[plan.pk, revision.number]),
        "checks_url": reverse("fittings:revision_checks", args=[plan.pk, revision.number]),
        "can_edit": _can_edit(request.user),
        "revisions": revisions.filter(status="issued") if workroom else revisions,
        "latest_session": plan.client.sessions.order_by("-taken_on", "-id").first(),
    }
    return render(request, "fittings/revision_detail.html", context)


@require_GET
@role_required(*ROLES)
@csp_override(SVG_CSP)
def revision_preview(request, pk, number):
    block, result = _saved_result(pk, number, request.user)
    return _svg_response(*previews.preview_lookup(block, result, result.unit))


def _saved_result(pk, number, user=None):
    """A saved revision's block and stored allotment (never recomputed)."""
    revision = _revision(_plan(pk), number, user)
    return selectors.revision_inputs(revision)[1], selectors.revision_result(revision)


@require_POST
@role_required(*EDITORS)
def revision_issue(request, pk, number):
    plan = _plan(pk)
    revision = _revision(plan, number)
    plan_services.issue_revision(revision=revision, user=request.user)
    messages.success(request, f"Revision {revision.number} is issued to the workroom and locked.")
    return redirect("fittings:revision_detail", plan.pk, revision.number)


@role_required(*EDITORS)
def revision_pins(request, pk, number):
    """Record what was pinned at a toile fitting of this revision, then make the next revision from it."""
    plan = _plan(pk)
    revision = _revision(plan, number)
    values, block, options = selectors.revision_inputs(revision)
    status = 200
    if request.method == "POST":
        form = PinForm(request.POST, block=block, unit=options.unit)
        if form.is_valid() and form.pins():
            plan_services.record_pins(
                revision=revision, pins=form.pins(), note=form.cleaned_data["note"], user=request.user
            )
            messages.success(request, "Pins recorded.")
            return redirect("fittings:revision_pins", plan.pk, revision.number)
        if form.is_valid():
            form.add_error(None, "Enter at least one pin adjustment.")
        status = 400
    else:
        form = PinForm(block=block, unit=options.unit, initial={"version": plan.version})
    # Not "block" in the context: Django's templates keep their own {% block %} state under that name.
    levels = [{"code": level, "label": LEVEL_LABELS.get(level, level)} for level in block.level_names]
    rows = [
        {
            "seam": seam,
            "cells": [
                {
                    "field": form[f"pin-{i}-{lv['code']}"],
                    "label": f"{seam.name}, {lv['label'].lower()}: pin, {options.unit}",
                }
                for lv in levels
            ],
        }
        for i, seam in enumerate(block.seams)
    ]
    pins = [
        {
            "seam": p.seam,
            "level": p.get_level_display(),
            "note": p.note,
            "amount": format_with_unit(p.amount_mm, options.unit, signed=True),
            "words": direction(float(p.amount_mm)),
        }
        for p in revision.pins.all()
    ]
    context = {
        "plan": plan,
        "client": plan.client,
        "revision": revision,
        "levels": levels,
        "form": form,
        "rows": rows,
        "pins": pins,
        "unit": options.unit,
    }
    return render(request, "fittings/revision_pins.html", context, status=status)


@require_POST
@role_required(*EDITORS)
def revision_apply_pins(request, pk, number):
    plan = _plan(pk)
    revision = _revision(plan, number)
    if not revision.pins.exists():
        messages.error(request, "There are no pins recorded on this revision yet.")
        return redirect("fittings:revision_pins", plan.pk, revision.number)
    try:
        expected = int(request.POST.get("version") or plan.version)
    except ValueError:
        return HttpResponse("The form was damaged; reload the page.", status=400)
    try:
        new = plan_services.revision_with_pins(revision=revision, user=request.user, expected_version=expected)
    except ConcurrentEdit as exc:
        messages.error(request, str(exc))
        return redirect("fittings:revision_pins", plan.pk, revision.number)
    messages.success(request, f"Revision {new.number} carries the pins from revision {revision.number}.")
    return redirect("fittings:revision_detail", plan.pk, new.number)


@require_GET
@role_required(*ROLES)
def revision_fitting_file(request, pk, number):
    """The revision's inputs as a fitting file (JSON), the same format the import takes."""
    import json

    plan = _plan(pk)
    revision = _revision(plan, number, request.user)
    response = HttpResponse(json.dumps(revision.inputs, indent=2), content_type="application/json")
    response["Content-Disposition"] = f'attachment; filename="{plan.client.reference}-plan{plan.pk}-rev{number}.json"'
    return response


@role_required(*EDITORS)
def fitting_import(request, client_pk):
    """Take in a fitting file for this client: a new session and a new plan from it."""
    client = _found(selectors.active_client(client_pk), "client")
    if request.method != "POST":
        return render(request, "fittings/fitting_import.html", {"client": client})
    form = FittingImportForm(request.POST, request.FILES)
    other = None
    if not form.is_valid():
        error = form.first_error()
    else:
        text, garment = form.cleaned_data["file"], form.cleaned_data["garment"]
        made_for = _file_client(text)
        if made_for and made_for != client.reference and not form.cleaned_data["other_client"]:
            other = made_for
            error = (
                f"This fitting file was made for client {made_for}, not {client.reference}. "
                f"Nothing was imported. To take its readings into {client.reference}'s record anyway, "
                "tick the box below and choose the file again."
            )
        else:
            try:
                plan = plan_services.import_fitting(client=client, text=text, user=request.user, garment=garment)
            except plan_services.ImportRefused as exc:
                error = import_refusal(exc.field, exc.message)
            else:
                messages.success(request, "Fitting file imported as a new session and plan.")
                return redirect("fittings:plan_edit", plan.pk)
    return render(
        request,
        "fittings/fitting_import.html",
        {
            "client": client,
            "error": error,
            "other": other,
            "garment": (request.POST.get("garment") or "").strip()[:200],
        },
        status=400,
    )


def _file_client(text: str) -> str:
    """The client reference a fitting file says it was made for ("" when it says none or cannot be read)."""
    import json

    try:
        about = json.loads(text).get("about") or {}
    except (ValueError, AttributeError, RecursionError):
        return ""
    made_for = about.get("client") if isinstance(about, dict) else None
    return made_for.strip()[:100] if isinstance(made_for, str) else ""


def _checks_response(request, block, result, unit):
    pattern = previews.altered_for(block, result)
    rows = [
        {
            "seam": t.seam,
            "front": t.front_panel,
            "back": t.back_panel,
            "front_base": format_length(t.front_base_mm, unit),
            "back_base": format_length(t.back_base_mm, unit),
            "front_after": format_length(t.front_after_mm, unit),
            "back_after": format_length(t.back_after_mm, unit),
            "difference": format_length(t.after_difference_mm, unit, signed=True),
            "words": _truing_words(t, unit),
            "ok": t.within_tolerance,
        }
        for t in pattern.seams
    ]
    return render(
        request,
        "fittings/_seam_checks.html",
        {
            "rows": rows,
            "findings": findings_for_screen(pattern.findings, unit),
            "unit": unit,
            "tolerance": in_unit("1/8 in (3.2 mm)", unit) if unit == "cm" else "1/8 in",
        },
    )


def _longer(front: str, back: str, difference_mm: float, unit: str) -> str:
    amount = format_with_unit(abs(difference_mm), unit)
    if format_length(difference_mm, unit) in ("0", "0.0"):
        return "the two edges are the same length"
    return f"the {front} edge is {amount} {'longer' if difference_mm > 0 else 'shorter'} than the {back} edge"


def _truing_words(t, unit: str) -> str:
    """What a seam's two edges do, in words: before and after, and what to do about it."""
    after = _longer(t.front_panel, t.back_panel, t.after_difference_mm, unit)
    before = _longer(t.front_panel, t.back_panel, t.base_difference_mm, unit)
    text = f"Now {after}" + ("" if before == after else f" (drafted: {before})") + "."
    if t.within_tolerance:
        return text + " Within tolerance: no truing needed."
    return text + f" Walk the seam and true it at the {t.end}."


@require_GET
@role_required(*EDITORS)
def plan_checks(request, pk):
    """Seam truing and outline checks for the live form's values (asked for after the table)."""
    block, result = _live_result(request, pk)
    return _checks_response(request, block, result, result.unit)


@require_GET
@role_required(*ROLES)
def revision_checks(request, pk, number):
    block, result = _saved_result(pk, number, request.user)
    return _checks_response(request, block, result, result.unit)


@require_GET
@role_required(*EDITORS)
def revision_proof(request, pk, number, document):
    """A proof of a revision's document, drawn at once and not issuing it: a draft's pages say DRAFT on each."""
    from fittings.printing.data import DocumentError, check_printable, document_data
    from fittings.printing.registry import DOCUMENTS
    from fittings.views_print import default_paper

    if document not in DOCUMENTS:
        raise Http404("No such document.")
    plan = _plan(pk)
    revision = _found(selectors.revision_for_print(plan, number), "revision")
    data = document_data(revision, request.build_absolute_uri("/"))
    try:
        check_printable(data)
    except DocumentError as exc:
        return render(
            request, "fittings/proof_refused.html", {"plan": plan, "revision": revision, "error": str(exc)}, status=409
        )
    paper = request.GET.get("paper") or default_paper(revision)
    if paper not in ("a4", "letter"):
        return HttpResponse("Choose a paper size: a4 or letter.", status=400, content_type="text/plain")
    response = HttpResponse(DOCUMENTS[document].render(data, paper), content_type="application/pdf")
    state = "draft" if revision.status != "issued" else "issued"
    response["Content-Disposition"] = (
        f'inline; filename="proof-{document}-{plan.client.reference}-plan{plan.pk}-r{number}-{state}.pdf"'
    )
    response["Cache-Control"] = "private, no-store"
    return response
