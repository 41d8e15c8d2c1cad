"""The installed LPS against its protection level: rooftop items in the protected volume,
separation distances, mesh size and down-conductor spacing.

`assess` judges a site's geometry (see `geometry_model`) and returns a verdict per
rooftop item and per system check, for the site screen and the report; the rule
`conformity` turns the ones that need acting on into results for `check`. A site
with no geometry recorded is not judged at all.
"""

from __future__ import annotations

from collections.abc import Iterator, Sequence

from inspectkit.engine.conformity_verdicts import Conformity, Verdict
from inspectkit.engine.iec62305 import ROLLING_SPHERE_RADIUS_M
from inspectkit.engine.lps_layout import Layout
from inspectkit.engine.mesh_and_downs import down_verdicts, mesh_verdicts
from inspectkit.engine.results import Result
from inspectkit.engine.rolling_sphere import Obstacles
from inspectkit.engine.rooftop_protection import PROTECTION_MARGIN_M, protection_of
from inspectkit.engine.rooftop_separation import separation_of, separation_sentence
from inspectkit.engine.site_facts import SiteFacts
from inspectkit.geometry_model import GeometryItem
from inspectkit.model import ProtectionLevel, Severity, Site


def assess(site: Site, geometry: Sequence[GeometryItem]) -> Conformity:
    """Judge a site's recorded geometry against its protection level.

    The same geometry is judged once per process: the screens ask again on every
    refresh, and the rolling sphere takes a second or so per item.
    """
    key = (site.protection_level, site.design_standard, *(g.model_dump_json() for g in geometry))
    if key not in _JUDGED:
        if len(_JUDGED) >= _JUDGED_KEPT:
            _JUDGED.pop(next(iter(_JUDGED)))
        _JUDGED[key] = _assess(site.protection_level, site.design_standard, geometry)
    return _JUDGED[key]


#: Sites judged in this process, by their level, standard and geometry (oldest first).
_JUDGED: dict[tuple[str, ...], Conformity] = {}
_JUDGED_KEPT = 64


def _assess(
    level: ProtectionLevel, design_standard: str, geometry: Sequence[GeometryItem]
) -> Conformity:
    r = ROLLING_SPHERE_RADIUS_M[level]
    layout = Layout.of(geometry)
    if not geometry:
        return Conformity(level, r, (), (), recorded=False)
    obstacles, tags = layout.obstacles()
    edition = "2006" if "2006" in design_standard else "2010"
    items = tuple(
        _judge_item(layout, item, obstacles, tags, level, edition) for item in layout.items
    )
    system = (*mesh_verdicts(layout, level), *down_verdicts(layout, level))
    return Conformity(level, r, items, system, recorded=True)


def conformity(facts: SiteFacts) -> Iterator[Result]:
    """Rule: rooftop items exposed or too close, and mesh or down conductors off the level."""
    if not facts.records.geometry:
        return
    site = facts.records.site
    judged = assess(site, facts.records.geometry)
    for verdict in (*judged.items, *judged.system):
        if verdict.severity is not Severity.OK:
            yield Result(
                severity=verdict.severity,
                rule="conformity",
                site_id=site.id,
                site_name=site.name,
                message=verdict.message,
                component_id=verdict.item.component_id if verdict.item else None,
                component_tag=verdict.tag,
                value=verdict.value,
                limit=verdict.limit,
                unit=verdict.unit,
            )


def _judge_item(
    layout: Layout,
    item: GeometryItem,
    obstacles: Obstacles,
    tags: list[str],
    level: ProtectionLevel,
    edition: str,
) -> Verdict:
    r = ROLLING_SPHERE_RADIUS_M[level]
    protection = protection_of(layout, item, obstacles, tags, r)
    separation = separation_of(layout, item, level, edition)
    what = f"{item.tag} ({item.what})" if item.what else item.tag
    parts, severity = [], Severity.OK
    if protection.exposed:
        severity = Severity.FAIL
        parts.append(
            f"{what} is outside the protected volume: its top is {protection.exposure_m:.2f} m "
            f"above it at ({protection.worst[0]:.1f}, {protection.worst[1]:.1f}); "
            f"{protection.fix}"
        )
    elif -protection.exposure_m < PROTECTION_MARGIN_M:
        severity = Severity.WATCH
        parts.append(
            f"{what} is protected by only {-protection.exposure_m:.2f} m (watch below "
            f"{PROTECTION_MARGIN_M:g} m): re-measure its height and the nearest air terminals"
        )
    else:
        parts.append(
            f"{what} is protected ({-protection.exposure_m:.2f} m inside the protected volume"
            + (f", under {', '.join(protection.resting_on)})" if protection.resting_on else ")")
        )
    sep_severity, sentence = separation_sentence(item, separation)
    if sentence:
        parts.append(sentence)
    if sep_severity.rank > severity.rank:
        severity = sep_severity
    value, limit, unit = protection.exposure_m, 0.0, "m"
    if separation is not None and sep_severity is not Severity.OK and not protection.exposed:
        value, limit = separation.clearance_m, separation.required_m
    return Verdict(
        tag=item.tag,
        severity=severity,
        message="; ".join(parts) + ".",
        value=value,
        limit=limit,
        unit=unit,
        item=item,
        protection=protection,
        separation=separation,
    )
