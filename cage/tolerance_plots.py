"""Figures of the tolerance analysis (matplotlib, Agg backend): uniformity of the built axes."""
from __future__ import annotations

import numpy as np


def uniformity_spread_figure(mc, title: str = ""):
    """Histogram of each axis's uniformity over the sampled cages, with the requirement.

    mc: a ``cage.tolerance.MonteCarlo``. title: already escaped for a figure.
    """
    from matplotlib.ticker import MaxNLocator

    from cage.figurestyle import _finish, _new_figure, extent_in, grid_box, wrapped

    fig = _new_figure(11.0, 3.6)
    # Margins in inches: tick labels and the y label left, each panel's tick labels between
    # panels, the figure's title (wrapped to the width, measured) and the panels' titles on
    # top, tick labels and x labels below.
    sup = fig.suptitle(wrapped(fig, title or f"{mc.samples} built cages, all axes meet the requirement: "
                                               f"{100.0 * mc.yield_share:.1f} %", 12.0, 10.6),
                       y=1.0 - 0.06 / 3.6, va="top")
    top_in = 0.06 + extent_in(fig, sup)[1] + 0.1 + 0.3
    gs = fig.add_gridspec(1, 3, **grid_box(fig, 0.72, 0.15, top_in, 0.5, ncols=3, wgap_in=0.5))
    first = fig.add_subplot(gs[0])
    axes = [first, fig.add_subplot(gs[1], sharey=first), fig.add_subplot(gs[2], sharey=first)]
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
    # counts of cages: whole numbers on the shared count axis, never 0.5 of a cage
    axes[0].yaxis.set_major_locator(MaxNLocator(integer=True))
    axes[0].legend(loc="upper right", fontsize=8)
    return _finish(fig)
