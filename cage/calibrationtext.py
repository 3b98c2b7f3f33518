"""The fitted calibration as text for the terminal. Command-line layer."""
from __future__ import annotations


def calibration_text(summary: dict) -> str:
    k = summary["coupling_nT_per_A"]
    lines = ["Fitted field at the sensor: B = B0 + K I (cage frame)",
             "  B0 (nT)       " + "".join(f"{v:>14,.1f}" for v in summary["offset_nT"]),
             "  K (nT/A)      " + "".join(f"{'axis ' + a:>14}" for a in "xyz")]
    for comp, row in zip("xyz", k):
        lines.append(f"    B{comp}          " + "".join(f"{v:>14,.1f}" for v in row))
    lines.append(f"  residual RMS  {summary['rms_residual_nT']:.2f} nT over kept rows "
                 f"({summary.get('n_rows', '?')} rows, {summary.get('n_outliers', 0)} flagged as outliers)")
    if summary.get("condition_number") is not None:
        lines.append(f"  condition of the fit {summary['condition_number']:.2f}")
    null = summary.get("null_current_A")
    if isinstance(null, dict) and all(null.get(a) is not None for a in "xyz"):
        lines.append("Corrected null currents: " + ", ".join(f"{a} {null[a]:+.4f} A" for a in "xyz"))
    check = summary.get("build_check")
    if isinstance(check, dict):
        scale = check.get("scale_error_percent")
        if scale:
            lines.append("Built cage against the design: scale error " +
                         ", ".join(f"{a} {scale[a]:+.2f} %" for a in "xyz"))
        non = check.get("non_orthogonality_deg")
        if isinstance(non, dict):
            lines.append("  non-orthogonality " + ", ".join(f"{k2} {v:+.3f} deg" for k2, v in non.items()))
        mis = check.get("misalignment_deg")
        if mis:
            lines.append("  misalignment from the design axes " + ", ".join(f"{a} {mis[a]:.3f} deg" for a in "xyz"))
    return "\n".join(lines)
