"""The invented example fittings as print data, for the document and workroom tests."""

import pytest

from tests.fittings.print_data import example_data


@pytest.fixture(scope="module")
def strong():
    return example_data("odalys-brenneman-strong-reduction")  # inches, 15 cm reduction, one toile pin


@pytest.fixture(scope="module")
def gentle():
    return example_data("hester-quayle-first-corset")  # centimetres, 6 cm reduction


@pytest.fixture(scope="module")
def bodice():
    return example_data("marguerite-ashdown-vale-bodice")  # centimetres, no reduction, cut on the fold, seamed back
