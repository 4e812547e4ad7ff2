"""Command-line quantities are read in the unit of the parameter or figure they belong to."""

import numpy as np
import pytest

from photorx import DesignError
from photorx.cli import main, parse_axis, parse_constraint
from photorx.units import parse_quantity


def test_bare_prefix_is_read_in_the_expected_unit():
    # "10k" for 10 kohm is how resistor values are written (common practice)
    assert parse_quantity("10k", "ohm") == 10e3
    assert parse_quantity("2.2p", "F") == 2.2e-12
    np.testing.assert_allclose(parse_axis("rf", "5k:20k:3"), [5e3, 12.5e3, 20e3], rtol=1e-15)


def test_axis_of_the_wrong_dimension_names_both():
    with pytest.raises(DesignError, match="capacitance.*resistance"):
        parse_axis("rf", "5 pF:20 pF:3")


def test_constraint_units_follow_the_figure():
    assert parse_constraint("bandwidth>=900 MHz") == ("bandwidth", (">=", 900e6))
    with pytest.raises(DesignError, match="frequency"):
        parse_constraint("bandwidth>=3 pF")


def test_cli_reports_wrong_dimension_as_one_line(capsys):
    assert main(["sweep", "--rf", "5 pF:20 pF:2", "-q"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "capacitance" in err[0]
