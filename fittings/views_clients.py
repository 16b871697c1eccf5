"""Clients, their measurement sessions and the comparison of two fittings."""

from django.contrib import messages
from django.http import Http404, HttpResponseBadRequest
from django.shortcuts import redirect, render
from django.views.decorators.http import require_POST

from atelier.roles import EDITORS, OWNER, role_of, role_required
from fittings import selectors, tables
from fittings.forms import ClientForm, SessionForm
from fittings.services import clients as client_services
from fittings.wording import in_unit
from patterns.core.measures import MEASURES, plausibility_notes
from patterns.core.units import UNITS


def _client(pk):
    client = selectors.active_client(pk)  # a client removed from the lists is not opened (the admin restores them)
    if client is None:
        raise Http404("No such client.")
    return client


@role_required(*EDITORS)
def client_edit(request, pk):
    client = _client(pk)
    if request.method == "POST":
        form = ClientForm(request.POST, instance=client)
        if form.is_valid():
            client_services.update_client(client=_client(pk), user=request.user, **form.cleaned_data)
            messages.success(request, "Client details saved.")
            return redirect("fittings:client_detail", client.pk)
        return render(request, "fittings/client_form.html", {"form": form, "client": _client(pk)}, status=400)
    return render(request, "fittings/client_form.html", {"form": ClientForm(instance=client), "client": client})


@role_required(*EDITORS)
def client_new(request):
    if request.method == "POST":
        form = ClientForm(request.POST)
        if form.is_valid():
            client = client_services.create_client(user=request.user, **form.cleaned_data)
            return redirect("fittings:client_detail", client.pk)
        return render(request, "fittings/client_form.html", {"form": form}, status=400)
    return render(request, "fittings/client_form.html", {"form": ClientForm()})


# Contact details and the whole history (drafts included) are for the owner and fitters; the workroom
# has its queue of issued revisions (fittings.views.workroom_queue).
@role_required(*EDITORS)
def client_detail(request, pk):
    """The client's timeline: sessions and plans, newest first."""
    client = _client(pk)
    timeline = selectors.client_timeline(client)
    return render(
        request,
        "fittings/client_detail.html",
        {
            "client": client,
            "timeline": timeline,
            "can_edit": role_of(request.user) in EDITORS,
            "sessions": [item.obj for item in timeline if item.kind == "session"],
        },
    )


@role_required(*EDITORS)
def session_new(request, client_pk):
    client = _client(client_pk)
    previous = selectors.latest_session(client)
    if request.method == "POST":
        form = SessionForm(request.POST, request.FILES)
        if form.is_valid():
            session = client_services.record_session(
                client=client, user=request.user, form_data=form.cleaned_data, values=form.values_mm()
            )
            messages.success(request, "Measurements saved.")
            return (
                redirect("fittings:client_detail", client.pk)
                if "done" in request.POST
                else redirect("fittings:plan_new", session.pk)
            )
        status = 400
    else:
        unit = previous.unit if previous else "cm"
        form = SessionForm(
            initial={
                "unit": unit,
                "kind": "first" if previous is None else "toile",
                "taken_on": client_services.today(),
            }
        )
        status = 200
    return _session_page(request, client, form, previous, None, status)


@role_required(*EDITORS)
def session_edit(request, pk):
    session = selectors.session_with_readings(pk)
    if session is None:
        raise Http404("No such session.")
    client = session.client
    previous = selectors.latest_session(client, before=session)
    conflict = None
    status = 200
    if request.method == "POST":
        form = SessionForm(request.POST, request.FILES)
        if form.is_valid():
            try:
                client_services.update_session(
                    session=session,
                    user=request.user,
                    form_data=form.cleaned_data,
                    values=form.values_mm(),
                    expected_version=form.cleaned_data.get("version") or 0,
                )
            except client_services.ConcurrentEdit as exc:
                conflict = str(exc)
                status = 409
            else:
                messages.success(request, "Measurements saved.")
                return redirect("fittings:client_detail", client.pk)
        else:
            status = 400
    else:
        form = SessionForm(initial=SessionForm.initial_for(session))
    return _session_page(request, client, form, previous, session, status, conflict)


def _hints_in_unit(form):
    """The how-to hints of the measurements written in the tape's unit ("about 10 cm below" -> inches)."""
    for m in MEASURES:
        field = form.fields[m.code]
        field.help_text = in_unit(m.hint, form.unit)
    return form


def _session_page(request, client, form, previous, session, status, conflict=None):
    _hints_in_unit(form)
    notes = _notes(form, previous)
    # A chosen file cannot be put back into a file input: when the form comes back, say which photos to choose again.
    lost = (
        [
            form.fields[name].label.removesuffix(" photo").lower()
            for name in request.FILES
            if name.startswith("photo_") and name in form.fields
        ]
        if form.is_bound and status != 200
        else []
    )
    context = {
        "client": client,
        "form": form,
        "session": session,
        "previous": previous,
        "conflict": conflict,
        "notes": notes,
        "advice": _advice(notes),
        "lost_photos": lost,
    }
    return render(request, "fittings/session_form.html", context, status=status)


def _notes(form, previous):
    """Plausibility advice for what is typed so far (never a refusal)."""
    values = {}
    for m in MEASURES:
        field = form[m.code]
        try:
            value = form.fields[m.code].clean(field.value()) if form.is_bound else None
        except Exception:  # noqa: BLE001 - a value that cannot be read is reported by the form itself
            value = None
        if value is not None:
            values[m.code] = float(value)
    before = selectors.session_values(previous) if previous else None
    unit = getattr(form, "unit", "cm")
    return {code: [in_unit(text, unit) for text in texts] for code, texts in plausibility_notes(values, before).items()}


def _advice(notes):
    """The advice per measurement, named: for the summary and for the slot beside each field."""
    labels = {m.code: m.label for m in MEASURES}
    return [{"code": m.code, "label": labels[m.code], "texts": notes.get(m.code, [])} for m in MEASURES]


@require_POST
@role_required(*EDITORS)
def session_check(request, client_pk):
    """htmx: advice on the readings while they are typed."""
    client = _client(client_pk)
    session_pk = request.POST.get("session")
    current = None
    if session_pk and session_pk.isascii() and session_pk.isdigit() and len(session_pk) < 19:
        current = selectors.session_with_readings(int(session_pk), client=client)
    previous = selectors.latest_session(client, before=current)
    form = SessionForm(request.POST)
    notes = _notes(form, previous)
    return render(
        request,
        "fittings/session_form.html#session-notes",
        {"notes": notes, "advice": _advice(notes), "form": form, "client": client, "oob": True},
    )


@require_POST
@role_required(*EDITORS)
def session_convert(request, client_pk):
    """htmx: the readings rewritten in the tape unit just chosen (``typed_unit`` says the one they were typed in)."""
    client = _client(client_pk)
    from_unit, to_unit = request.POST.get("typed_unit", ""), request.POST.get("unit", "")
    if from_unit not in UNITS or to_unit not in UNITS:
        return HttpResponseBadRequest(f"Choose a tape unit: {' or '.join(UNITS)}.")
    data = request.POST.copy()
    if from_unit != to_unit:
        for code, text in SessionForm.readings_in_unit(request.POST, from_unit, to_unit).items():
            data[code] = text
    form = _hints_in_unit(SessionForm(data))
    notes = _notes(form, None)
    return render(
        request,
        "fittings/session_form.html#session-measures",
        {"form": form, "client": client, "notes": notes, "advice": _advice(notes)},
    )


@role_required(*EDITORS)
def compare(request, client_pk):
    """Two sessions or two revisions of one client side by side, differences marked.

    ``a`` and ``b`` name them: ``s12`` for session 12, ``r40`` for revision 40.
    """
    client = _client(client_pk)
    a, b = request.GET.get("a", ""), request.GET.get("b", "")
    choices = _compare_choices(selectors.client_timeline(client))
    if not (a or b):
        # The chooser: the two newest sessions preselected, older first.
        sessions = [value for value, _ in choices if value.startswith("s")]
        a, b = (sessions[1], sessions[0]) if len(sessions) > 1 else ("", sessions[0] if sessions else "")
        return render(request, "fittings/compare.html", {"client": client, "choices": choices, "a": a, "b": b})
    try:
        comparison = tables.comparison(*selectors.comparison_pair(client, a, b))
    except selectors.NotComparable as exc:
        return render(
            request,
            "fittings/compare.html",
            {
                "client": client,
                "error": str(exc),
                "choices": choices,
                "a": a,
                "b": b,
            },
            status=400,
        )
    return render(
        request,
        "fittings/compare.html",
        {"client": client, "comparison": comparison, "choices": choices, "a": a, "b": b},
    )


def _compare_choices(timeline):
    """(value, words) for every session and revision of the client, newest first."""
    from django.utils.formats import date_format

    out = []
    for item in timeline:
        if item.kind == "session":
            s = item.obj
            out.append((f"s{s.pk}", f"Readings of {date_format(s.taken_on)} ({s.get_kind_display().lower()})"))
        else:
            for r in item.obj.revisions.all():
                out.append((f"r{r.pk}", f"{item.obj.garment}, revision {r.number} ({r.get_status_display().lower()})"))
    return out


@require_POST
@role_required(OWNER)
def client_delete(request, pk):
    client = _client(pk)
    client_services.soft_delete_client(client=client, user=request.user)
    messages.success(request, f"{client.reference} is removed from the lists; the records are kept.")
    return redirect("fittings:client_list")
