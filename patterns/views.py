"""The atelier's base patterns: list, look, type in a new block, edit, read off a card, grade."""

import dataclasses
import hashlib
import json
import re

from django.contrib import messages
from django.core.cache import caches
from django.http import Http404, HttpResponse
from django.shortcuts import redirect, render
from django.urls import reverse
from django.views.decorators.http import require_GET, require_POST

from atelier.roles import EDITORS, ROLES, role_of, role_required
from patterns import selectors, services
from patterns.core.drafting import build_block, draft_from_block, draft_from_tape
from patterns.core.findings import ERROR
from patterns.core.fitting import block_to_dict
from patterns.core.grading import grade_run
from patterns.core.preview import block_svg, markers_from_findings
from patterns.forms import BlockForm, GradeForm, Shape, ShapeFields, TapeForm, TapeSetupForm

DRAWING_SECONDS = 24 * 3600
_KEY = re.compile(r"^[0-9a-f]{64}$")


def _can_edit(user):
    return role_of(user) in EDITORS


def _pattern(pk):
    found = selectors.pattern(pk)
    if found is None:
        raise Http404("No such base pattern.")
    return found


# --- reading -----------------------------------------------------------------------------


@role_required(*ROLES)
def pattern_list(request):
    """Base patterns in use, by size run, with the runs' sizes smallest first."""
    runs, singles = selectors.patterns_by_run()
    return render(
        request, "patterns/pattern_list.html", {"runs": runs, "singles": singles, "can_edit": _can_edit(request.user)}
    )


@role_required(*ROLES)
def pattern_detail(request, pk):
    pattern = _pattern(pk)
    block = selectors.block_for(pattern)
    context = {
        "pattern": pattern,
        "base_block": block,
        "can_edit": _can_edit(request.user) and pattern.is_active,
        "rows": selectors.width_rows(block, "cm"),
        "seams": selectors.seam_rows(block, "cm"),
        "versions": selectors.versions_of(pattern),
        "plans": pattern.plans.count(),
    }
    return render(request, "patterns/pattern_detail.html", context)


@require_GET
@role_required(*ROLES)
def pattern_drawing(request, pk):
    block = selectors.block_for(_pattern(pk))
    return _svg(_drawing(block, ()))


def _drawing_key(block, markers) -> str:
    text = json.dumps([block_to_dict(block), list(markers)], sort_keys=True, default=str)
    return hashlib.sha256(text.encode()).hexdigest()


def _drawing(block, markers) -> str:
    cache = caches["previews"]
    key = "block:" + _drawing_key(block, markers)
    svg = cache.get(key)
    if svg is None:
        svg = block_svg(block, markers)
        cache.set(key, svg, DRAWING_SECONDS)
    return svg


def _svg(svg):
    response = HttpResponse(svg, content_type="image/svg+xml")
    response["Cache-Control"] = "private, max-age=3600"
    return response


@require_GET
@role_required(*EDITORS)
def block_drawing(request, key):
    """A drawing made for the block form as it was typed (kept for a day under its inputs' hash)."""
    if not _KEY.match(key):
        raise Http404("No such drawing.")
    svg = caches["previews"].get("block:" + key)
    if svg is None:
        raise Http404("This drawing is no longer kept; type a value to draw it again.")
    return _svg(svg)


# --- typing a block in ------------------------------------------------------------------------


def _block_page(request, form, *, pattern=None, drafted=None, status=200, problems=()):
    context = {
        "form": form,
        "shape_form": ShapeFields(
            initial={"unit": form.shape.unit, "panel_count": form.shape.panels, "levels": list(form.shape.levels)}
        ),
        "pattern": pattern,
        "problems": problems,
        **_drawing_context(drafted),
    }
    return render(request, "patterns/block_form.html", context, status=status)


def _drawing_context(drafted):
    if drafted is None:
        return {"drafted": None, "drawing_url": None}
    url = None
    if drafted.block is not None:
        markers = markers_from_findings([f for f in drafted.findings if f.panel])
        _drawing(drafted.block, markers)
        url = reverse("patterns:block_drawing", args=[_drawing_key(drafted.block, markers)])
    return {"drafted": drafted, "drawing_url": url}


def _shape(request, default=None):
    return Shape.read(request.POST if request.method == "POST" else request.GET, default)


@role_required(*EDITORS)
def block_new(request):
    """A new base pattern typed in: shape first (panels, levels, unit), then every value."""
    shape = _shape(request)
    if request.method == "POST" and "layout" not in request.POST:
        return _save(request, BlockForm(request.POST, shape=shape), None)
    if request.method == "POST":  # the layout changed: keep what was typed
        initial = BlockForm.initial_new(shape)
        for key, value in list(initial.items()):
            # A box left unticked on a panel that was on the page stays unticked.
            panel = key.split("_", 1)[0]
            if value is True and f"{panel}_name" in request.POST and key not in request.POST:
                initial[key] = False
        form = BlockForm(initial={**initial, **_typed(request.POST)}, shape=shape)
    else:
        form = BlockForm(initial=BlockForm.initial_new(shape), shape=shape)
    return _block_page(request, form)


def _typed(data):
    return {
        k: (data.getlist(k) if k in ("levels",) or k.endswith("_moves") else data.get(k))
        for k in data
        if k not in ("csrfmiddlewaretoken", "layout")
    }


@role_required(*EDITORS)
def block_edit(request, pk):
    """Edit a block.  When plans use it, saving makes a new version and the plans keep this one."""
    pattern = _pattern(pk)
    if not pattern.is_active:
        later = pattern.later_versions.order_by("-version").first()
        messages.warning(request, "This version was replaced; you are editing the latest one.")
        if later is None:
            raise Http404("This pattern is no longer in use.")
        return redirect("patterns:block_edit", later.pk)
    draft = draft_from_block(selectors.block_for(pattern))
    default = Shape(len(draft.panels), [lv.name for lv in draft.levels], "cm")
    shape = _shape(request, default) if request.method == "POST" else default
    if request.method == "POST" and "layout" not in request.POST:
        return _save(request, BlockForm(request.POST, shape=shape), pattern)
    if request.method == "POST":
        form = BlockForm(initial=_typed(request.POST), shape=shape)
    else:
        form = BlockForm(initial=BlockForm.initial_for(draft, "cm"), shape=shape)
    return _block_page(request, form, pattern=pattern, drafted=build_block(draft))


def _save(request, form, pattern):
    if not form.is_valid():
        return _block_page(request, form, pattern=pattern, status=400)
    drafted = build_block(form.draft())
    if not drafted.ok:
        return _block_page(request, form, pattern=pattern, drafted=drafted, status=400)
    block = drafted.block
    if pattern is not None:  # its place in its size run is not on the form
        block = dataclasses.replace(block, size_order=pattern.size_order)
    try:
        if pattern is None:
            saved = services.save_block(block)
        else:
            saved = services.edit_block(pattern, block)
    except services.BlockInvalid as exc:
        return _block_page(request, form, pattern=pattern, drafted=drafted, status=400, problems=exc.errors)
    if pattern is not None and saved.pk != pattern.pk:
        messages.success(
            request,
            f"Saved as version {saved.version}. The plans made on version {pattern.version} "
            "keep it, so their shapes do not change.",
        )
    else:
        messages.success(request, "The block is saved.")
    return redirect("patterns:pattern_detail", saved.pk)


@require_POST
@role_required(*EDITORS)
def block_draw(request):
    """The drawing and the findings for the values typed so far: htmx gets the fragment, a plain post the page."""
    shape = _shape(request)
    form = BlockForm(request.POST, shape=shape)
    drafted = build_block(form.draft()) if form.is_valid() else None
    if request.htmx:
        missing = sum(1 for e in form.errors.as_data().values() if any(x.code == "required" for x in e))
        typed = [
            (form.fields[name].label, errors[0])
            for name, errors in form.errors.items()
            if name in form.fields and not any(x.code == "required" for x in form.errors.as_data()[name])
        ]
        context = {"form": form, "missing": missing, "typed_errors": typed, **_drawing_context(drafted)}
        return render(request, "patterns/block_form.html#block-drawing", context)
    status = 200 if drafted is not None and drafted.ok else 400
    editing = request.POST.get("editing", "")
    pattern = selectors.pattern(editing)
    return _block_page(request, form, pattern=pattern, drafted=drafted, status=status)


# --- reading a card pattern with a tape ----------------------------------------------------------


@role_required(*EDITORS)
def block_measure(request):
    """Guided entry: what the card is, then the top edge, each level in turn, the bottom edge, the seams.

    Every answer so far travels in the form (hidden), so the steps work
    without JavaScript and nothing is stored until the last one.
    """
    if request.method != "POST":
        return render(request, "patterns/tape_form.html", {"setup": TapeSetupForm(), "step": None})
    setup = TapeSetupForm(request.POST)
    if not setup.is_valid():
        return render(request, "patterns/tape_form.html", {"setup": setup, "step": None}, status=400)
    data, levels, panels = setup.setup()
    if not levels:
        setup.add_error("levels", "Choose the levels marked on the card.")
        return render(request, "patterns/tape_form.html", {"setup": setup, "step": None}, status=400)
    tape = TapeForm(request.POST, levels=levels, panels=panels, unit=data["unit"])
    steps = tape.steps()
    try:
        step = min(max(int(request.POST.get("step", 0)), 0), len(steps))
    except ValueError:
        step = 0
    if "back" in request.POST:
        step = max(step - 2, 0)
    # Check the steps answered so far; the first one with a problem is asked again.
    tape.is_valid()
    wrong = next((i for i, (_, names) in enumerate(steps[:step]) if any(n in tape.errors for n in names)), None)
    context = {"setup": setup, "tape": tape, "steps": steps, "unit": data["unit"]}
    if wrong is not None and "back" not in request.POST:
        return render(request, "patterns/tape_form.html", {**context, **_step(tape, steps, wrong)}, status=400)
    if step < len(steps):
        # The step to answer, with what was typed so far and no complaints about what is not asked yet.
        shown = TapeForm(
            initial={**_tape_initial(levels, panels), **_typed(request.POST)},
            levels=levels,
            panels=panels,
            unit=data["unit"],
        )
        return render(request, "patterns/tape_form.html", {**context, "tape": shown, **_step(shown, steps, step)})
    # Every step answered: the block, the same way the block form makes one.
    draft, tape_findings = draft_from_tape(
        tape.readings(),
        name=data["name"],
        size=data["size_label"],
        garment=data["garment"],
        seams=tape.seams(),
        centre_front=data["centre_front"],
        centre_back=data["centre_back"],
        seam_allowance_mm=float(data["seam_allowance"]),
    )
    drafted = build_block(draft)
    findings = (*tape_findings, *drafted.findings)
    errors = [f for f in findings if f.severity == ERROR]
    context.update({"findings": findings, **_drawing_context(drafted), **_step(tape, steps, len(steps))})
    if errors or not drafted.ok:
        return render(request, "patterns/tape_form.html", context, status=400)
    if "save" not in request.POST:
        return render(request, "patterns/tape_form.html", {**context, "review": True})
    try:
        saved = services.save_block(drafted.block)
    except services.BlockInvalid as exc:
        return render(
            request, "patterns/tape_form.html", {**context, "review": True, "problems": exc.errors}, status=400
        )
    messages.success(request, "The block read off the card is saved.")
    return redirect("patterns:pattern_detail", saved.pk)


def _tape_initial(levels, panels):
    out = {}
    front = next((i for i, p in enumerate(panels) if p.side == "back"), len(panels)) - 1
    for j in range(1, len(panels)):
        side = j - 1 == front
        out[f"s{j}_name"] = "Side seam" if side else f"Seam {j}"
        out[f"s{j}_kind"] = "side" if side else "other"
        out[f"s{j}_moves"] = list(levels)
    return out


def _step(tape, steps, index):
    """What the page shows at step ``index``: its fields, and every other answer kept hidden."""
    shown = set(steps[index][1]) if index < len(steps) else set()
    return {
        "step": index,
        "step_count": len(steps),
        "step_title": steps[index][0] if index < len(steps) else "Check and save",
        "shown": [tape[name] for name in steps[index][1]] if index < len(steps) else [],
        "kept": [tape[name] for _, names in steps for name in names if name not in shown],
        "next_step": index + 1,
    }


# --- grading ---------------------------------------------------------------------------------


@role_required(*EDITORS)
def pattern_grade(request, pk):
    """A size run from this block: girth per size step at each level, spread over the seams by the engine."""
    pattern = _pattern(pk)
    block = selectors.block_for(pattern)
    status, graded, problems = 200, None, ()
    if request.method == "POST":
        form = GradeForm(request.POST, block=block)
        if form.is_valid():
            graded = grade_run(block, form.table(), form.cleaned_data["sizes"], block.size)
            if "save" in request.POST:
                try:
                    run = services.save_graded_run(
                        pattern=pattern, run_name=form.cleaned_data["run_name"].strip(), graded=graded
                    )
                except services.BlockInvalid as exc:
                    problems, status = exc.errors, 400
                else:
                    messages.success(request, f"The size run “{run.name}” is saved with {len(graded)} sizes.")
                    return redirect("patterns:pattern_list")
            elif any(f.severity == ERROR for g in graded for f in g.findings):
                status = 400
        else:
            status = 400
    else:
        form = GradeForm(
            initial={**GradeForm.initial_for(block), "run_name": f"{pattern.name} run", "sizes": pattern.size_label},
            block=block,
        )
    rows = selectors.graded_rows(block, graded, form.unit) if graded else None
    context = {
        "pattern": pattern,
        "base_block": block,
        "form": form,
        "graded": graded,
        "rows": rows,
        "problems": problems,
    }
    return render(request, "patterns/grade_form.html", context, status=status)
