"""Supply channels: selection, validation, and drive checks against Ohm's and Joule's laws."""
import math

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from cage.errors import InputError
from cage.supplies import (
    DriveCheck,
    Supply,
    check_drive,
    field_step_nT,
    rounded_setpoint_A,
    supply_for_axis,
    validate_supply,
)

BENCH = Supply(axis="any", max_voltage_V=30.0, max_current_A=5.0, resolution_A=0.001, bipolar=True, name="bench")
X_ONLY = Supply(axis="x", max_voltage_V=60.0, max_current_A=3.0, resolution_A=0.0005, bipolar=False, name="x amp")


def test_axis_entry_wins_over_any():
    supplies = [BENCH, X_ONLY]
    assert supply_for_axis(supplies, "x") is X_ONLY
    assert supply_for_axis(supplies, "y") is BENCH
    assert supply_for_axis((X_ONLY, BENCH), "z") is BENCH


def test_missing_and_duplicate_entries_are_refused():
    with pytest.raises(InputError, match="no supply for axis y"):
        supply_for_axis([X_ONLY], "y")
    with pytest.raises(InputError, match=r"supply\[0\] and supply\[2\] are both for axis x"):
        supply_for_axis([X_ONLY, BENCH, X_ONLY], "x")
    with pytest.raises(InputError, match="axis any"):
        supply_for_axis([BENCH, BENCH], "z")


@pytest.mark.parametrize(
    "changes, text",
    [
        (dict(max_voltage_V=0.0), "max_voltage_V must be a positive number"),
        (dict(max_current_A=-1.0), "max_current_A must be a positive number"),
        (dict(resolution_A=0.0), "resolution_A must be a positive number"),
        (dict(max_current_A=math.nan), "max_current_A"),
        (dict(max_voltage_V=math.inf), "max_voltage_V"),
        (dict(max_voltage_V="ten"), "max_voltage_V must be a number"),
        (dict(resolution_A=10.0), "resolution_A 10 is larger than max_current_A 5"),
        (dict(axis="w"), "axis must be one of x, y, z, any"),
        (dict(bipolar="yes"), "bipolar must be true or false"),
    ],
)
def test_bad_supplies_are_refused_naming_where(changes, text):
    fields = dict(axis="y", max_voltage_V=30.0, max_current_A=5.0, resolution_A=0.001, bipolar=True)
    fields.update(changes)
    with pytest.raises(InputError) as info:
        validate_supply(Supply(**fields), "site.toml: supply[1] (axis y)")
    message = str(info.value)
    assert message.startswith("site.toml: supply[1] (axis y): ")
    assert text in message
    assert "\n" not in message


def test_good_supply_is_returned():
    assert validate_supply(BENCH, "supply[0]") is BENCH


def test_drive_check_follows_ohm_and_joule():
    # 2 A through 8 ohm hot winding + 0.5 ohm leads: V = I R = 17 V, P = I^2 R = 34 W.
    check = check_drive(BENCH, 2.0, 8.0, 0.5)
    assert isinstance(check, DriveCheck)
    assert check.voltage_V == pytest.approx(17.0)
    assert check.power_W == pytest.approx(34.0)
    assert check.current_headroom_A == pytest.approx(3.0)
    assert check.voltage_headroom_V == pytest.approx(13.0)
    assert check.within_limits and not check.polarity_switch_needed


def test_over_voltage_and_over_current_are_outside_limits():
    assert not check_drive(BENCH, 4.0, 8.0, 0.5).within_limits  # 34 V > 30 V
    over_current = check_drive(BENCH, 5.5, 1.0, 0.0)
    assert over_current.current_headroom_A == pytest.approx(-0.5) and not over_current.within_limits
    exactly = check_drive(BENCH, 3.0, 10.0, 0.0)  # 30 V on a 30 V channel
    assert exactly.within_limits and exactly.voltage_headroom_V == pytest.approx(0.0)


def test_negative_current_needs_a_polarity_switch_on_a_unipolar_channel():
    unipolar = check_drive(X_ONLY, -1.5, 10.0, 1.0)
    assert unipolar.polarity_switch_needed
    assert unipolar.voltage_V == pytest.approx(-16.5)
    assert unipolar.voltage_headroom_V == pytest.approx(60.0 - 16.5)
    assert unipolar.within_limits
    assert not check_drive(BENCH, -1.5, 10.0, 1.0).polarity_switch_needed
    assert not check_drive(X_ONLY, 1.5, 10.0, 1.0).polarity_switch_needed


def test_field_step_is_resolution_times_field_per_amp():
    # 1 mA steps on an axis giving 25 000 nT/A: 25 nT steps.
    assert field_step_nT(BENCH, 25000.0) == pytest.approx(25.0)
    assert field_step_nT(BENCH, -25000.0) == pytest.approx(25.0)


@pytest.mark.parametrize(
    "current, expected",
    [(1.2344, 1.234), (1.2346, 1.235), (1.2345, 1.235), (-1.2345, -1.235), (0.0004, 0.0), (-0.0004, 0.0), (3.0, 3.0)],
)
def test_setpoint_rounds_to_the_step(current, expected):
    assert rounded_setpoint_A(BENCH, current) == pytest.approx(expected, abs=1e-12)


@settings(max_examples=60, deadline=None)
@given(current=st.floats(-5.0, 5.0), resolution=st.sampled_from([1e-4, 5e-4, 1e-3, 0.01, 0.1]))
def test_rounded_setpoint_is_a_step_multiple_within_half_a_step(current, resolution):
    supply = Supply("x", 10.0, 5.0, resolution, True)
    rounded = rounded_setpoint_A(supply, current)
    assert abs(rounded - current) <= 0.5 * resolution * (1 + 1e-9)
    steps = rounded / resolution
    assert abs(steps - round(steps)) < 1e-6
