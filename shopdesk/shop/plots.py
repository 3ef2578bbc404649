"""Small server-side plots as inline SVG, drawn with matplotlib.

Thread-safe: each call builds its own :class:`matplotlib.figure.Figure`; pyplot and its
global figure manager are never used. The SVG that comes back is ready to place inside a
page under a strict Content Security Policy: no ``<style>`` element and no ``style``
attributes (they become SVG presentation attributes), no script, no XML prologue, and
every ``id`` carries a prefix so that two plots can share a page.

Import this module lazily, inside the view that draws: importing matplotlib costs a few
hundred milliseconds that no other page should pay.
"""

from __future__ import annotations

import io
import re
import xml.etree.ElementTree as ET
from collections.abc import Mapping, Sequence
from typing import Any

import matplotlib

matplotlib.use("Agg")  # never a GUI backend, should anything import pyplot
# Text stays text (small files, selectable, the page's own font). Read when a figure is
# saved; set once here, at import, because matplotlib has no per-figure switch for it.
matplotlib.rcParams["svg.fonttype"] = "none"

from matplotlib.figure import Figure  # noqa: E402  (after the backend is chosen)
from matplotlib.ticker import MaxNLocator  # noqa: E402

SVG_NS = "http://www.w3.org/2000/svg"
XLINK_NS = "http://www.w3.org/1999/xlink"
ET.register_namespace("", SVG_NS)
ET.register_namespace("xlink", XLINK_NS)

# Curve styles by name; a caller may also pass a mapping of matplotlib line properties.
STYLES: dict[str, dict[str, Any]] = {
    "main": {"color": "#1f5f8b", "linewidth": 2.2, "linestyle": "-"},
    "firmer": {"color": "#a12a1f", "linewidth": 1.4, "linestyle": "--"},
    "softer": {"color": "#2d6a3e", "linewidth": 1.4, "linestyle": ":"},
    "plain": {"color": "#5b6670", "linewidth": 1.2, "linestyle": "-"},
}
FONT_FAMILY = "'DejaVu Sans', system-ui, sans-serif"  # as static/css/screen.css
INK = "#1d232a"
MUTED = "#5b6670"
GRID = "#d5dade"

Curve = tuple[str, Sequence[float], Sequence[float], "str | Mapping[str, Any]"]
Mark = tuple[str, float, float]


def air_spring_plot(
    curves: Sequence[Curve],
    marks: Sequence[Mark] = (),
    *,
    x_label: str = "Travel (mm)",
    y_label: str = "Spring force (N)",
    title: str = "Spring force against travel",
    id_prefix: str = "plot",
    size_in: tuple[float, float] = (6.4, 3.6),
) -> str:
    """Force against travel as an SVG string (:func:`line_plot` with a spring's axes)."""
    return line_plot(
        curves, marks, x_label=x_label, y_label=y_label, title=title, id_prefix=id_prefix, size_in=size_in
    )


def line_plot(
    curves: Sequence[Curve],
    marks: Sequence[Mark] = (),
    *,
    x_label: str,
    y_label: str,
    title: str,
    id_prefix: str = "plot",
    size_in: tuple[float, float] = (6.4, 3.6),
) -> str:
    """Curves of one quantity against another, from x = 0, as an SVG string.

    ``curves`` lists ``(label, positions_mm, forces_N, style)``; ``style`` names one of
    :data:`STYLES` or is a mapping of matplotlib line properties. ``marks`` lists
    ``(label, x_mm, y_N)`` points to mark and label on the plot. ``title`` becomes the
    SVG's accessible name (it is not drawn: the page has a heading).
    """
    figure = Figure(figsize=size_in, dpi=100, facecolor="white")
    # Fixed margins: constrained layout would double the drawing time.
    figure.subplots_adjust(left=0.11, right=0.98, top=0.97, bottom=0.15)
    axes = figure.add_subplot()
    for label, positions, forces, style in curves:
        line_style = STYLES[style] if isinstance(style, str) else dict(style)
        axes.plot(positions, forces, label=label, **line_style)
    for label, x, y in marks:
        axes.plot([x], [y], marker="o", markersize=6, color=INK, linestyle="none", zorder=5)
        axes.annotate(
            label,
            (x, y),
            xytext=(12, -14),  # below and right: a rising spring curve leaves that corner free
            textcoords="offset points",
            verticalalignment="top",
            fontsize=9,
            color=INK,
            bbox={"boxstyle": "round,pad=0.25", "facecolor": "white", "edgecolor": GRID, "linewidth": 0.8},
            zorder=6,
        )
    axes.set_xlabel(x_label, fontsize=9, color=MUTED)
    axes.set_ylabel(y_label, fontsize=9, color=MUTED)
    axes.tick_params(labelsize=8, colors=MUTED)
    # A handful of round ticks reads best on a tablet, and ticks are most of the drawing time.
    axes.xaxis.set_major_locator(MaxNLocator(nbins=5, steps=[1, 2, 2.5, 5, 10]))
    axes.yaxis.set_major_locator(MaxNLocator(nbins=6, steps=[1, 2, 2.5, 5, 10]))
    axes.grid(True, color=GRID, linewidth=0.6)
    axes.set_axisbelow(True)
    axes.set_xlim(left=0)
    axes.axhline(0, color=MUTED, linewidth=0.8)
    for side in ("top", "right"):
        axes.spines[side].set_visible(False)
    for side in ("left", "bottom"):
        axes.spines[side].set_color(GRID)
    if curves:
        axes.legend(fontsize=8, frameon=False, loc="upper left")
    buffer = io.StringIO()
    figure.savefig(buffer, format="svg", metadata={"Date": None, "Creator": None})
    return _clean_svg(buffer.getvalue(), title=title, id_prefix=id_prefix)


_STYLE_DECLARATION = re.compile(r"\s*([a-z-]+)\s*:\s*(.+?)\s*$")


def _clean_svg(text: str, *, title: str, id_prefix: str) -> str:
    """Make matplotlib's SVG safe to inline under a strict CSP and unique on a page."""
    root = ET.fromstring(text)
    # The stylesheet matplotlib writes holds only inherited defaults: move them to the root.
    for defs in root.findall(f"{{{SVG_NS}}}defs"):
        for style in defs.findall(f"{{{SVG_NS}}}style"):
            defs.remove(style)
        if len(defs) == 0:
            root.remove(defs)
    metadata = root.find(f"{{{SVG_NS}}}metadata")
    if metadata is not None:
        root.remove(metadata)
    root.set("stroke-linejoin", "round")
    root.set("stroke-linecap", "butt")
    renamed: dict[str, str] = {}
    for element in root.iter():
        inline = element.attrib.pop("style", "")
        if inline:
            for declaration in inline.split(";"):
                match = _STYLE_DECLARATION.match(declaration)
                if match:
                    name, value = match.groups()
                    element.set(name, FONT_FAMILY if name == "font-family" else value)
        identifier = element.get("id")
        if identifier:
            # Numbered in document order: matplotlib's own ids are salted at random per call.
            renamed[identifier] = f"{id_prefix}-{len(renamed) + 1}"
            element.set("id", renamed[identifier])
    href = f"{{{XLINK_NS}}}href"
    for element in root.iter():
        link = element.get(href)
        if link and link.startswith("#") and link[1:] in renamed:
            element.set(href, "#" + renamed[link[1:]])
        clip = element.get("clip-path")
        if clip:
            element.set(
                "clip-path", re.sub(r"url\(#([^)]+)\)", lambda m: f"url(#{renamed.get(m[1], m[1])})", clip)
            )
    # Scale with its container; the viewBox keeps the proportions.
    root.attrib.pop("width", None)
    root.attrib.pop("height", None)
    root.set("role", "img")
    root.set("aria-labelledby", f"{id_prefix}-title")
    title_element = ET.Element(f"{{{SVG_NS}}}title", {"id": f"{id_prefix}-title"})
    title_element.text = title
    root.insert(0, title_element)
    # The prefix map is global to the process and other libraries (the PDF writer's metadata)
    # register prefixes of their own, which can drop ours: name both again, every time.
    ET.register_namespace("", SVG_NS)
    ET.register_namespace("xlink", XLINK_NS)
    return ET.tostring(root, encoding="unicode")


def bar_plot(
    labels: Sequence[str],
    values: Sequence[float],
    *,
    y_label: str,
    title: str,
    id_prefix: str = "bars",
    size_in: tuple[float, float] = (6.4, 3.0),
    every_nth_label: int = 1,
) -> str:
    """One bar per label as an SVG string, with the same look and clean-up as :func:`line_plot`.

    ``every_nth_label`` thins the axis labels when there are many bars (weeks of a year).
    ``title`` becomes the SVG's accessible name.
    """
    figure = Figure(figsize=size_in, dpi=100, facecolor="white")
    figure.subplots_adjust(left=0.11, right=0.98, top=0.95, bottom=0.22)
    axes = figure.add_subplot()
    positions = list(range(len(values)))
    axes.bar(positions, values, color=STYLES["main"]["color"], width=0.8)
    axes.set_xticks(positions[::every_nth_label], list(labels)[::every_nth_label], rotation=0, fontsize=7)
    axes.set_ylabel(y_label, fontsize=9, color=MUTED)
    axes.tick_params(labelsize=8, colors=MUTED)
    axes.yaxis.set_major_locator(MaxNLocator(nbins=5, steps=[1, 2, 2.5, 5, 10], integer=True))
    axes.grid(True, axis="y", color=GRID, linewidth=0.6)
    axes.set_axisbelow(True)
    for side in ("top", "right"):
        axes.spines[side].set_visible(False)
    for side in ("left", "bottom"):
        axes.spines[side].set_color(GRID)
    buffer = io.StringIO()
    figure.savefig(buffer, format="svg", metadata={"Date": None, "Creator": None})
    return _clean_svg(buffer.getvalue(), title=title, id_prefix=id_prefix)
