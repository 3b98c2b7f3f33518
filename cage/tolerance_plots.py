"""Figures of the tolerance analysis (matplotlib, Agg backend): uniformity of the built axes."""
from __future__ import annotations

import numpy as np


def uniformity_spread_figure(mc, title: str = ""):
    """Histogram of each axis's uniformity over the sampled cages, with the requirement.

    mc: a ``cage.tolerance.MonteCarlo``. title: already escaped for a figure.
    """
    from cage.figurestyle import _finish, _new_figure

    fig = _new_figure(11.0, 3.6)
    first = fig.add_subplot(1, 3, 1)
    axes = [first, fig.add_subplot(1, 3, 2, sharey=first), fig.add_subplot(1, 3, 3, sharey=first)]
    req_pct = 100.0 * mc.uniformity
    for ax, spread in zip(axes, mc.axes):
        dev_pct = 100.0 * spread.deviation
        hi = max(float(dev_pct.max()), req_pct) * 1.1
        ax.hist(dev_pct, bins=np.linspace(0.0, hi, 40), color="#4a7ab5")
        ax.axvline(req_pct, color="#b5443a", lw=1.5, label="requirement")
        ax.axvline(100.0 * spread.nominal_deviation, color="#333333", lw=1.0, ls="--", label="as designed")
        ax.set_title(f"axis {spread.axis}: yield {100.0 * spread.yield_share:.1f} %")
        ax.set_xlabel("uniformity over the test volume (%)")
    axes[0].set_ylabel("built cages")
    axes[0].legend(loc="upper right", fontsize=8)
    fig.suptitle(title or f"{mc.samples} built cages, all axes meet the requirement: "
                          f"{100.0 * mc.yield_share:.1f} %")
    return _finish(fig)
