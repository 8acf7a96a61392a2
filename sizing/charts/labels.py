"""Label placement on a figure: a greedy placer in display pixels that keeps labels clear of
each other and of the drawn curves."""
from __future__ import annotations

import math

import numpy as np

CROSSES = 1.0e4     # the cost of a label box over a drawn line: never taken (see :func:`clear`)


def clear(cost) -> bool:
    """True when a placement cost means: over no drawn line and no other label."""
    return cost < 1000.0


class Placer:
    """Greedy label placement in display pixels: avoid other labels and curves."""

    def __init__(self, ax):
        self.ax = ax
        self.fig = ax.figure
        bb = ax.get_window_extent()
        self.box = (bb.x0, bb.y0, bb.x1, bb.y1)
        self.taken = []          # rectangles (x0, y0, x1, y1)
        self.lines = {}          # key -> (N, 2) densified display points

    def size(self, text, fontsize, weight="normal", pad=3.0):
        from matplotlib.font_manager import FontProperties
        from matplotlib.textpath import TextToPath

        k = self.fig.dpi / 72.0
        w = h = 0.0
        for line in text.split("\n"):
            lw, lh, _ = TextToPath().get_text_width_height_descent(
                line, FontProperties(size=fontsize, weight=weight), ismath=False)
            w, h = max(w, lw), h + lh * 1.25
        return w * k + 2 * pad * k, h * k + 2 * pad * k

    def add_line(self, key, x, y):
        p = self.ax.transData.transform(np.column_stack([x, y]))
        p = p[np.all(np.isfinite(p), axis=1)]
        if len(p) > 1:
            seg = np.linalg.norm(np.diff(p, axis=0), axis=1)
            n = np.maximum((seg / 3.0).astype(int), 1)
            parts = [p[i] + np.linspace(0, 1, n[i], endpoint=False)[:, None] * (p[i + 1] - p[i])
                     for i in range(len(seg)) if np.isfinite(seg[i]) and seg[i] < 1e5]
            p = np.vstack(parts + [p[-1:]]) if parts else p
        self.lines[key] = p

    def cost(self, rect, own=None, mass_weight=0.25, margin=4.0, soft_mass=False):
        x0, y0, x1, y1 = rect
        bx0, by0, bx1, by1 = self.box
        if x0 < bx0 + 2 or y0 < by0 + 2 or x1 > bx1 - 2 or y1 > by1 - 2:
            return math.inf
        c = 0.0
        for t in self.taken:
            ox, oy = min(x1, t[2]) - max(x0, t[0]), min(y1, t[3]) - max(y0, t[1])
            c += (1000.0 + ox * oy) if ox > 0 and oy > 0 else 0.0
        x0, y0, x1, y1 = x0 - margin, y0 - margin, x1 + margin, y1 + margin
        for key, p in self.lines.items():
            if key == own or (isinstance(key, tuple) and key[0] == "hatch" and key[1] == own):
                continue
            inside = (p[:, 0] >= x0) & (p[:, 0] <= x1) & (p[:, 1] >= y0) & (p[:, 1] <= y1)
            n = np.count_nonzero(inside)
            if n:       # a label never cuts a drawn line; over a hatch band (or, for a callout, a mass line) it costs
                soft = isinstance(key, tuple) and (key[0] == "hatch" or (soft_mass and key[0] == "mass"))
                c += CROSSES if not soft else 0.4 * (120.0 + 15.0 * n ** 0.5)
        return c

    def take(self, rect):
        self.taken.append(rect)

    def _candidates(self, key, min_points):
        """The line `key` in pixels and up to 90 of its points inside the axes (evenly spread
        along it), or (line, None) where it has fewer than ``min_points`` or none inside."""
        p = self.lines.get(key)
        if p is None or len(p) < min_points:
            return p, None
        bx0, by0, bx1, by1 = self.box
        inside = np.where((p[:, 0] > bx0) & (p[:, 0] < bx1) & (p[:, 1] > by0) & (p[:, 1] < by1))[0]
        if inside.size == 0:
            return p, None
        return p, inside[np.linspace(0, inside.size - 1, min(inside.size, 90)).astype(int)]

    def along(self, key, w, h, prefer=0.5, spread=0.25, side=False, gap=4.0):
        """Best place for a w x h box on (``side=False``) or beside the line `key`.

        Beside: above the line, or on its feasible side horizontally (left of
        a rising curve or a vertical limit, right of a falling one). Returns
        (centre x, centre y, rect, cost) in pixels, or None if nowhere fits.
        """
        p, cand = self._candidates(key, 1)
        if cand is None:
            return None
        best, best_c = None, math.inf
        for j, i in enumerate(cand):
            cx, cy = p[i]
            if side:
                d = p[min(i + 3, len(p) - 1)] - p[max(i - 3, 0)]
                rising = d[1] * d[0] >= 0 or abs(d[0]) < 1e-9
                sx = -1.0 if rising else 1.0
                rects = [(cx - w / 2, cy + gap, cx + w / 2, cy + gap + h),
                         (cx + sx * (gap + w / 2) - w / 2, cy - h / 2, cx + sx * (gap + w / 2) + w / 2, cy + h / 2),
                         (cx - sx * (gap + w / 2) - w / 2, cy - h / 2, cx - sx * (gap + w / 2) + w / 2, cy + h / 2)]
            else:
                rects = [(cx - w / 2, cy - h / 2, cx + w / 2, cy + h / 2)]
            pos = j / max(len(cand) - 1, 1)
            for k, rect in enumerate(rects):
                c = self.cost(rect, own=key, mass_weight=1.0 if isinstance(key, tuple) else 0.25)
                c += 40.0 * ((pos - prefer) / spread) ** 2 + (30.0 if k == 2 else 0.0)
                if side:
                    x0, y0, x1, y1 = rect
                    mine = (p[:, 0] >= x0) & (p[:, 0] <= x1) & (p[:, 1] >= y0) & (p[:, 1] <= y1)
                    c += 60.0 * np.count_nonzero(mine) ** 0.5
                if c < best_c:
                    best, best_c = ((rect[0] + rect[2]) / 2, (rect[1] + rect[3]) / 2, rect, c), c
        return best

    def inline(self, key, w, h, prefer=0.5, spread=0.35, margin=3.0):
        """Best place for a w x h label written along the line `key` (rotated to its slope, on it):
        (centre x, centre y, bounding rect, cost, angle [deg]) in pixels, or None."""
        p, cand = self._candidates(key, 3)
        if cand is None:
            return None
        bx0, by0, bx1, by1 = self.box
        best, best_c = None, math.inf
        for j, i in enumerate(cand):
            cx, cy = p[i]
            d = p[min(i + 4, len(p) - 1)] - p[max(i - 4, 0)]
            a = math.atan2(d[1], d[0])
            if a > math.pi / 2:
                a -= math.pi
            elif a < -math.pi / 2:
                a += math.pi
            ca, sa = math.cos(a), math.sin(a)
            hw, hh = w / 2 * abs(ca) + h / 2 * abs(sa), w / 2 * abs(sa) + h / 2 * abs(ca)
            rect = (cx - hw, cy - hh, cx + hw, cy + hh)
            if rect[0] < bx0 + 2 or rect[1] < by0 + 2 or rect[2] > bx1 - 2 or rect[3] > by1 - 2:
                continue
            c = 0.0
            for t in self.taken:
                ox, oy = min(rect[2], t[2]) - max(rect[0], t[0]), min(rect[3], t[3]) - max(rect[1], t[1])
                c += (1000.0 + ox * oy) if ox > 0 and oy > 0 else 0.0
            for other, q in self.lines.items():
                if other == key:
                    continue
                rx, ry = q[:, 0] - cx, q[:, 1] - cy
                u, v = rx * ca + ry * sa, -rx * sa + ry * ca
                n = np.count_nonzero((np.abs(u) <= w / 2 + margin) & (np.abs(v) <= h / 2 + margin))
                if n:
                    c += CROSSES if not (isinstance(other, tuple) and other[0] == "hatch") else 40.0 + 5.0 * n ** 0.5
            # the label must lie along its own line: the line may not bend out of the box
            rx, ry = p[:, 0] - cx, p[:, 1] - cy
            u, v = rx * ca + ry * sa, -rx * sa + ry * ca
            near = np.abs(u) <= w / 2
            if np.any(np.abs(v[near]) > h / 2):
                c += CROSSES
            c += 40.0 * ((j / max(len(cand) - 1, 1) - prefer) / spread) ** 2
            if c < best_c:
                best, best_c = (cx, cy, rect, c, math.degrees(a)), c
        return best

    def free_spot(self, w, h, points, pad=6.0):
        """Least crowded w x h box centred on one of the candidate pixel points."""
        best, best_c = None, math.inf
        for cx, cy in points:
            rect = (cx - w / 2 - pad, cy - h / 2 - pad, cx + w / 2 + pad, cy + h / 2 + pad)
            c = self.cost(rect)
            if c < best_c:
                best, best_c = (cx, cy, rect), c
        return best if best_c < 100.0 else None


def put(ax, placer, spot, text, **style):
    """Write text centred on a placer spot (pixels) and reserve its box."""
    x, y = ax.transData.inverted().transform(spot[:2])
    placer.take(spot[2])
    return ax.text(x, y, text, ha="center", va="center", zorder=style.pop("zorder", 5), **style)


def thin(poly):
    if hasattr(poly, "set_hatch_linewidth"):      # matplotlib >= 3.10; else the rc default
        poly.set_hatch_linewidth(0.8)
