"""The winding of one axis: turns and wire for a pair of given size, against the supply and the heat limit.

Planning layer; step 2 of the method in ``cage.optimise``.
"""
from __future__ import annotations

import math
from dataclasses import dataclass


from cage.coils import AXES, CoilPair
from cage.supplies import check_drive, field_step_nT
from cage.planinputs import AxisPlan, PlanInputs, UNIFORMITY_GRID, UNIFORMITY_MARGIN, _size_name


# ----------------------------------------------------------------------------- windings

@dataclass(frozen=True)
class _WindingResult:
    plan: AxisPlan | None
    reason: str
    badness: float  # how far the closest try missed (1 = at the limit)


def centre_field_per_ampere_turn_T(shape: str, size_m: float, spacing_m: float) -> float:
    """Axial field at the centre of a pair (T per ampere-turn of each coil), closed form.

    Round loop of radius R at axial distance z: B = mu0 R^2 / (2 (R^2 + z^2)^(3/2)) per
    ampere (Jackson, Classical Electrodynamics, 3rd ed., section 5.5). Square loop of half
    side h at axial distance z: B = 2 mu0 h^2 / (pi (h^2 + z^2) sqrt(2 h^2 + z^2)) per ampere
    (Biot-Savart of four straight sides; e.g. Misakian, J. Res. NIST 105, 557 (2000)). A pair:
    twice that at z = spacing / 2.
    """
    mu0 = 4e-7 * math.pi
    z = spacing_m / 2.0
    if shape == "round":
        r2 = size_m * size_m
        return 2.0 * mu0 * r2 / (2.0 * (r2 + z * z) ** 1.5)
    h2 = (size_m / 2.0) ** 2
    return 2.0 * 2.0 * mu0 * h2 / (math.pi * (h2 + z * z) * math.sqrt(2.0 * h2 + z * z))


def _field_per_amp_per_turn_T(pair: CoilPair) -> float:
    return centre_field_per_ampere_turn_T(pair.shape, pair.size_m, pair.spacing_m)


def _turns_for_step(max_step_nT: float, k1_T: float, resolution_A: float) -> int:
    """Most turns per coil that keep the field step (supply step x field per ampere) under max_step_nT."""
    return math.floor(max_step_nT * 1e-9 / (k1_T * resolution_A) * (1 + 1e-12))


def _wire_label(inp: PlanInputs) -> str:
    return f"{inp.frame.width_m * 1000:g} x {inp.frame.depth_m * 1000:g} mm frame channel"


def fewest_feasible(evaluate, lo: int, hi: int, at_hi):
    """Bisection for the fewest turns (or turns multiplier) in (lo, hi] whose ``evaluate(n)`` is
    feasible (its item 4 true), given ``at_hi = evaluate(hi)`` feasible: voltage and temperature
    fall as turns rise, so feasibility is monotone. Returns that evaluation."""
    chosen = at_hi
    while hi - lo > 1:
        mid = (lo + hi) // 2
        trial = evaluate(mid)
        if trial[4]:
            hi, chosen = mid, trial
        else:
            lo = mid
    return chosen


def choose_winding(axis: str, geometry: CoilPair, inp: PlanInputs, min_uniform_size: float) -> _WindingResult:
    """Best wire and turns for one axis whose frame line is ``geometry`` (shape, size, spacing;
    see module docstring). The winding sits on the channel floor (``cage.channel``): its mean
    line, which the field model uses, is inside the frame line by the unfilled channel depth."""
    from cage.channel import winding_pair
    from cage.electrical import axis_electrics, max_turns
    from cage.uniformity import box_deviation

    a = AXES.index(axis)
    supply = inp.supplies[a]
    need_nT = float(inp.needed_field_nT[a])
    need_T = need_nT * 1e-9

    deviations: dict = {}

    def uniform_ok(pair: CoilPair) -> bool:
        key = (pair.size_m, pair.spacing_m)
        if key not in deviations:
            deviations[key] = box_deviation(CoilPair(axis, pair.shape, pair.size_m, pair.spacing_m, 1),
                                            inp.test_volume_m, n_per_edge=UNIFORMITY_GRID)
        return deviations[key] <= inp.uniformity * UNIFORMITY_MARGIN

    def winding(wire: str, n: int) -> tuple[CoilPair, float]:
        pair = winding_pair(geometry, wire, n, inp.frame.width_m, inp.frame.depth_m)
        return pair, _field_per_amp_per_turn_T(pair)
    best: AxisPlan | None = None
    best_key = None
    closest: tuple[float, str] | None = None

    def miss(badness: float, text: str) -> None:
        nonlocal closest
        if closest is None or badness < closest[0]:
            closest = (badness, text)

    for wire in inp.wires:
        n_fit = max_turns(wire, inp.frame.width_m, inp.frame.depth_m)
        if n_fit < 1:
            miss(math.inf, f"the {axis} axis: {wire} does not fit the {_wire_label(inp)}")
            continue
        # The pack's depth moves its mean line a little with the turns: start from the thinnest
        # pack's field per ampere-turn (the largest) and step to the exact counts.
        k1 = winding(wire, 1)[1]
        n_cur = max(1, math.ceil(need_T / (k1 * supply.max_current_A) - 1e-9))
        while n_cur <= n_fit and need_T > winding(wire, n_cur)[1] * n_cur * supply.max_current_A * (1 + 1e-12):
            n_cur += 1
        n_hi = n_fit
        if inp.max_field_step_nT is not None:
            n_res = min(n_fit, _turns_for_step(inp.max_field_step_nT, k1, supply.resolution_A))
            while n_res >= 1 and winding(wire, n_res)[1] * n_res * supply.resolution_A * 1e9 \
                    > inp.max_field_step_nT * (1 + 1e-12):
                n_res -= 1
            n_hi = min(n_fit, n_res)
        if n_cur > n_fit:
            miss(n_cur / max(n_fit, 1),
                 f"the {axis} axis needs {need_nT / 1000:.1f} uT; within the supply's "
                 f"{supply.max_current_A:g} A that takes at least {n_cur} turns of {wire} per coil "
                 f"on a {geometry.size_m:.3f} m {_size_name(geometry.shape)}, but only {n_fit} fit the "
                 f"{_wire_label(inp)}")
            continue
        if n_cur > n_hi:
            miss(1.0 + (n_cur - n_hi) / max(n_hi, 1),
                 f"the {axis} axis needs {need_nT / 1000:.1f} uT; reaching it within the supply's "
                 f"{supply.max_current_A:g} A takes {n_cur} turns of {wire}, too many to keep the field step "
                 f"under {inp.max_field_step_nT:g} nT with the supply's {supply.resolution_A:g} A step "
                 f"(at most {n_hi})")
            continue

        def evaluate(n: int, uniform: bool = True):
            pair, k1n = winding(wire, n)
            current = need_T / (k1n * n)
            el = axis_electrics(pair, wire, current, lead_length_m=inp.lead_length_m,
                                frame_width_m=inp.frame.width_m, frame_depth_m=inp.frame.depth_m,
                                ambient_temperature_C=inp.ambient_temperature_C)
            drive = check_drive(supply, current, el.resistance_hot_ohm, el.lead_resistance_ambient_ohm)
            hot_ok = el.temperature_converged and el.winding_temperature_C <= inp.max_winding_temperature_C
            ok = drive.within_limits and hot_ok and (not uniform or uniform_ok(pair))
            return pair, current, el, drive, ok

        if inp.minimise != "mass" and best_key is not None:
            # Least power takes the most turns allowed: a wire whose top winding cannot beat the
            # best so far is not chosen whatever its uniformity, so that check (the costly one)
            # is skipped. The plan chosen is the same; only a refusal needs every wire's reason,
            # and with a best in hand there is none.
            _, _, el_top, drive_top, _ = evaluate(n_hi, uniform=False)
            if (drive_top.power_W, el_top.copper_mass_kg) >= best_key:
                continue
        top = evaluate(n_hi)
        if not top[4]:
            pair_top, current, el, drive, _ = top
            if drive.within_limits and not uniform_ok(pair_top):
                dev = deviations[(pair_top.size_m, pair_top.spacing_m)]
                miss(1.0 + dev / inp.uniformity,
                     f"the {axis} axis: {n_hi} turns of {wire} on the channel floor of a {geometry.size_m:.3f} m "
                     f"{_size_name(geometry.shape)} frame wind a {pair_top.size_m:.3f} m coil, which gives "
                     f"{dev * 100:.4f} % over the test volume, more than {inp.uniformity * UNIFORMITY_MARGIN * 100:.4g} %")
                continue
            if not el.temperature_converged or el.winding_temperature_C > inp.max_winding_temperature_C:
                rise = inp.max_winding_temperature_C - inp.ambient_temperature_C
                t = el.winding_temperature_C
                badness = math.inf if not math.isfinite(t) else 1.0 + (t - inp.max_winding_temperature_C) / rise
                hot = "would run away thermally" if not math.isfinite(t) else f"would reach {t:.0f} C"
                text = (f"the {axis} axis needs {need_nT / 1000:.1f} uT; with {n_hi} turns of {wire} "
                        f"(the most allowed) at {current:.4g} A the winding {hot}, over the "
                        f"{inp.max_winding_temperature_C:g} C limit")
            else:
                badness = abs(drive.voltage_V) / supply.max_voltage_V
                text = (f"the {axis} axis needs {need_nT / 1000:.1f} uT; with {n_hi} turns of {wire} "
                        f"(the most allowed) that takes {current:.4g} A at {abs(drive.voltage_V):.3g} V "
                        f"with the winding at {el.winding_temperature_C:.0f} C, more than the supply's "
                        f"{supply.max_voltage_V:g} V")
            miss(badness, text)
            continue
        if inp.minimise == "mass":
            chosen = fewest_feasible(evaluate, n_cur - 1, n_hi, top)  # hi feasible; the fewest feasible turns
        else:
            chosen = top
        pair, current, el, drive, _ = chosen
        key = (el.copper_mass_kg, drive.power_W) if inp.minimise == "mass" else (drive.power_W, el.copper_mass_kg)
        if best_key is None or key < best_key:
            k1_nT = _field_per_amp_per_turn_T(pair) * pair.turns * 1e9
            best_key = key
            best = AxisPlan(
                pair=pair, wire=wire, electrics=el, supply=supply, drive=drive, needed_field_nT=need_nT,
                full_current_A=current, field_per_amp_nT=k1_nT, field_step_nT=field_step_nT(supply, k1_nT),
                uniformity_reached=deviations[(pair.size_m, pair.spacing_m)],  # as uniform_ok found it
                min_uniform_size_m=min_uniform_size, frame_pair=geometry,
            )
    if best is not None:
        return _WindingResult(best, "", 0.0)
    if not inp.wires:
        return _WindingResult(None, "no wires are allowed (coil.wires is empty)", math.inf)
    if closest is None:
        return _WindingResult(None, f"the {axis} axis: no allowed wire fits the {_wire_label(inp)}", math.inf)
    return _WindingResult(None, closest[1], closest[0])
