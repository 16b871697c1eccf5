"""Form data for the block form, as a browser would send it, made from a core Block."""

from patterns.core.drafting import draft_from_block
from patterns.forms import BlockForm


def block_post(block, unit="cm", by_widths=False, **changes):
    """The block form's fields for ``block``; ``by_widths`` leaves the stitch-line places out.

    A change of None leaves that field out (as an unticked box or an empty field is sent).
    """
    data = {}
    for key, value in BlockForm.initial_for(draft_from_block(block), unit).items():
        if by_widths and key.endswith("_x"):
            continue
        if isinstance(value, bool):
            if value:
                data[key] = "on"
        elif isinstance(value, list):
            data[key] = [str(v) for v in value]
        else:
            data[key] = str(value)
    for key, value in changes.items():
        if value is None:
            data.pop(key, None)
        else:
            data[key] = value
    return data


def tape_post(**changes):
    """The tape form's fields at its first step, for a two-panel card block read in cm.

    A change of None leaves that field out, as for ``block_post``.
    """
    data = {
        "unit": "cm",
        "name": "Card block",
        "size_label": "12",
        "garment": "underbust corset",
        "centre_front": "busk",
        "centre_back": "laced",
        "levels": ["waist", "hip"],
        "panel_names": "Front\nBack (back)",
        "bound": "on",
        "seam_allowance": "1.5",
        "step": "0",
    }
    data.update(changes)
    return {key: value for key, value in data.items() if value is not None}
