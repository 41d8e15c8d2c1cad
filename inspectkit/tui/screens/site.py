"""One site: its system as a tree, latest readings, trends, findings, visits and schedule."""

from __future__ import annotations

from datetime import date

from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, VerticalScroll
from textual.screen import Screen
from textual.widgets import DataTable, Footer, Header, Static, TabbedContent, TabPane, Tree

from inspectkit.engine.history import in_service, series
from inspectkit.engine.results import SEVERITY_WORDS
from inspectkit.engine.schedule import DueStatus
from inspectkit.model import (
    WALKING_ORDER,
    Component,
    Inspection,
    InspectionState,
    Inspector,
    Quantity,
    SiteRecords,
)
from inspectkit.printable import printable
from inspectkit.site_states import (
    NO_PROFILE,
    ProfileCache,
    SiteState,
    judge,
    reading_verdicts,
)
from inspectkit.store.queries import load_site_records
from inspectkit.tui.dialogs.confirm import ConfirmDialog
from inspectkit.tui.dialogs.editors import component_dialog, retired, site_dialog
from inspectkit.tui.widgets.roof_plan import RoofPlanPane
from inspectkit.tui.widgets.sparkline import sparkline
from inspectkit.tui.widgets.state_badge import StateBadge, state_text
from inspectkit.units import format_value

#: A due item's status in the words the lists use.
_DUE_WORDS = {
    DueStatus.OK: "ok",
    DueStatus.DUE_SOON: "due soon",
    DueStatus.DUE: "due soon",
    DueStatus.OVERDUE: "overdue",
}

#: From this many lines up, every group of the tree starts open; below it only the
#: groups with readings (and short ones) do, so the readings show on a small screen.
TALL = 40



class SiteScreen(Screen[None]):
    """A site as the inspector needs it before and after a visit.

    A screen about this one site (the report, say) gets a Binding below whose
    action pushes it with `self.site_id`; the palette lists it by itself.
    """

    CSS_PATH = "site.tcss"

    BINDINGS = [
        Binding("escape", "app.pop_screen", "Back", id="site.back", tooltip="Back to the list"),
        Binding(
            "w", "walkdown", "Walkdown", id="site.walkdown",
            tooltip="Start a walkdown, or continue the site's open draft",
        ),
        Binding("e", "edit_site", "Edit site", id="site.edit", tooltip="Change the site's details"),
        Binding(
            "a", "add_component", "Add part", id="site.add_component",
            tooltip="Add a component to the system",
        ),
        Binding(
            "t", "edit_component", "Edit/re-tag", id="site.edit_component",
            tooltip="Change the highlighted component, its tag included",
        ),
        Binding(
            "x", "retire_component", "Retire", id="site.retire",
            tooltip="Retire the highlighted component; its history is kept",
        ),
        Binding(
            "i", "draft_inspector", "Inspector", id="site.draft_inspector", show=False,
            tooltip="Set or change who inspected the site's latest draft",
        ),
        Binding(
            "D", "discard_draft", "Discard draft", id="site.discard_draft", show=False,
            tooltip="Discard the site's latest draft with what it recorded, after asking",
        ),
        Binding(
            "r", "report", "Report", id="site.report", show=False,
            tooltip="Preview, sign and export the report of the visit highlighted in Visits",
        ),
    ]

    def __init__(self, site_id: str) -> None:
        super().__init__()
        self.site_id = site_id
        self.records: SiteRecords | None = None
        self.state: SiteState | None = None

    @property
    def tree(self) -> Tree[str]:
        return self.query_one("#system", Tree)

    def compose(self) -> ComposeResult:
        yield Header()
        with Horizontal(id="site-head"):
            yield StateBadge(id="state")
            yield Static("", id="site-title")
        yield Static("", id="site-summary", classes="hint")
        with Horizontal(id="site-body"):
            yield Tree("System", id="system")
            with TabbedContent(id="tabs"):
                with TabPane("Checks", id="tab-checks"), VerticalScroll():
                    yield Static("", id="checks")
                with TabPane("Trends", id="tab-trends"):
                    yield DataTable(id="trends", cursor_type="row")
                with TabPane("Findings", id="tab-findings"):
                    yield DataTable(id="findings", cursor_type="row")
                with TabPane("Visits", id="tab-visits"):
                    yield DataTable(id="visits", cursor_type="row")
                with TabPane("Schedule", id="tab-schedule"):
                    yield DataTable(id="schedule", cursor_type="row")
                with TabPane("Roof plan", id="tab-plan"):
                    yield RoofPlanPane(id="roof-plan")
        yield Footer()

    def on_mount(self) -> None:
        self.tree.show_root = False
        for table_id, columns in (
            ("trends", ("Electrode", "Trend", "Ω/year", "Crosses limit", "Note")),
            ("findings", ("Tag", "Grade", "Due by", "Finding")),
            ("visits", ("Date", "Kind", "State", "Inspector")),
            ("schedule", ("Due", "Inspection", "Status", "Why")),
        ):
            self.query_one(f"#{table_id}", DataTable).add_columns(*columns)
        self.tree.focus()

    def on_screen_resume(self) -> None:
        self.reload()

    def reload(self) -> None:
        """Read the site again and judge it; quick for one site, so done on the spot."""
        store, today = self.app.store, self.app.today
        self.records = records = load_site_records(store, self.site_id)
        profiles = ProfileCache()
        self.state = judge(records, today, profiles)
        site = records.site
        profile = profiles.get(site.profile)
        graded = (
            profile.grading(site.protection_level, site.height_m)[1]
            if profile is not None
            else f"level {site.protection_level.value}"
        )
        flags = [
            f for f, on in (("critical", site.critical), ("explosive risk", site.explosive_risk))
            if on
        ]
        self.query_one("#state", StateBadge).show(self.state.word)
        self.query_one("#site-title", Static).update(
            # Text, not markup: names are shown as typed, their control characters escaped.
            Text.assemble(
                (printable(site.name), "bold"),
                f" · {graded} · {printable(site.client) or '—'}, "
                f"{printable(site.town) or '—'} · {printable(site.profile)}"
                f"{' · ' + ', '.join(flags) if flags else ''}",
            )
        )
        check = self.state.check
        self.query_one("#site-summary", Static).update(
            check.summary if check else _not_judged(self.state)
        )
        verdicts = reading_verdicts(check, records) if check else {}
        self._fill_tree(records, verdicts, today)
        self._fill_checks()
        self._fill_trends(records)
        self._fill_findings(records)
        self._fill_visits(records)
        self._fill_schedule()
        self.query_one(RoofPlanPane).show(records)

    def _fill_tree(self, records: SiteRecords, verdicts: dict[str, str], today: date) -> None:
        tree = self.tree
        selected = tree.cursor_node.data if tree.cursor_node else None
        tree.clear()
        latest = {key: group[-1] for key, group in series(records.readings).items()}
        by_kind: dict[object, list[Component]] = {}
        for component in records.components:
            by_kind.setdefault(component.kind, []).append(component)
        for kind in WALKING_ORDER:
            components = by_kind.get(kind, [])
            if not components:
                continue
            ids = {c.id for c in components}
            measured = any(component_id in ids for component_id, _ in latest)
            expand = measured or len(components) <= 3 or self.size.height >= TALL
            branch = tree.root.add(f"{kind.label} ({len(components)})", expand=expand)
            for component in sorted(components, key=lambda c: c.tag):
                label = Text(component.tag, style="bold")
                if not in_service(component, today):
                    label.append(f"  retired {component.retired_on}", style="dim")
                for (component_id, quantity), reading in latest.items():
                    if component_id != component.id:
                        continue
                    value = format_value(reading.value, quantity, reading.over_range)
                    label.append(f"  {value} ")
                    label.append_text(state_text(verdicts.get(reading.id)))
                node = branch.add_leaf(label, data=component.id)
                if component.id == selected:
                    tree.move_cursor(node)

    def _fill_checks(self) -> None:
        """The engine's results as sentences, wrapped, worst first."""
        check = self.state.check if self.state else None
        text = Text()
        for result in check.results if check else ():
            text.append_text(state_text(SEVERITY_WORDS[result.severity].word))
            text.append(f" {result.message}\n")
        if check is not None and not check.results:
            text.append("Nothing to act on.")
        self.query_one("#checks", Static).update(text)

    def _fill_trends(self, records: SiteRecords) -> None:
        table = self.query_one("#trends", DataTable)
        table.clear()
        check = self.state.check if self.state else None
        if check is None:
            return
        groups = series(records.readings)
        for trend in check.trends:
            group = groups.get((trend.component_id, Quantity.EARTH_ISOLATED), [])
            values = [r.value for r in group if r.value is not None]
            slope = trend.slope_ohm_per_year
            crossing = Text(
                trend.crossing.isoformat() if trend.crossing else "—",
                style="bold yellow" if trend.before_next_complete else "",
            )
            table.add_row(
                trend.component_tag,
                sparkline(values, trend.limit),
                "—" if slope is None else f"{slope:+.2f}",
                crossing,
                trend.note,
            )

    def _fill_findings(self, records: SiteRecords) -> None:
        table = self.query_one("#findings", DataTable)
        table.clear()
        tags = {c.id: c.tag for c in records.components}
        for finding in records.findings:
            if finding.resolved_by is not None or finding.grade.value == "sound":
                continue
            table.add_row(
                tags.get(finding.component_id or "", "—"),
                finding.grade.value.replace("_", " "),
                finding.due_by.isoformat() if finding.due_by else "—",
                finding.text,
            )

    def _fill_visits(self, records: SiteRecords) -> None:
        table = self.query_one("#visits", DataTable)
        table.clear()
        names = {
            i.id: i.name
            for i in self.app.store.select(Inspector)
        }
        for visit in sorted(records.inspections, key=lambda i: i.date, reverse=True):
            state = visit.state.value if visit.state is InspectionState.SIGNED else (
                "finished" if visit.finished else "draft"
            )
            table.add_row(
                visit.date.isoformat(),
                visit.kind.value.replace("_", "-"),
                state,
                names.get(visit.inspector_id or "", "—"),
                key=visit.id,
            )

    def _fill_schedule(self) -> None:
        table = self.query_one("#schedule", DataTable)
        table.clear()
        schedule = self.state.check.schedule if self.state and self.state.check else None
        if schedule is None:
            return
        for item in schedule.due_items:
            late = f" by {item.overdue_days} d" if item.overdue_days else ""
            status = state_text(_DUE_WORDS[item.status])
            status.append(late)
            kind = item.kind.value.replace("_", "-")
            table.add_row(item.due.isoformat(), kind, status, item.reason)

    # ------------------------------------------------------------------ helpers

    def highlighted_component(self) -> Component | None:
        node = self.tree.cursor_node
        if node is None or node.data is None or self.records is None:
            return None
        return next((c for c in self.records.components if c.id == node.data), None)

    def open_draft(self) -> Inspection | None:
        """The site's latest draft not yet marked finished: a walkdown continues it."""
        drafts = [
            i for i in (self.records.inspections if self.records else [])
            if i.state is InspectionState.DRAFT and not i.finished
        ]
        return max(drafts, key=lambda i: (i.date, i.created_at), default=None)

    # ------------------------------------------------------------------ actions

    def action_walkdown(self) -> None:
        from inspectkit.tui.screens.site_visits import start_walkdown

        start_walkdown(self)

    def action_draft_inspector(self) -> None:
        from inspectkit.tui.screens.site_visits import choose_draft_inspector

        choose_draft_inspector(self)

    def action_discard_draft(self) -> None:
        from inspectkit.tui.screens.site_visits import discard_draft

        discard_draft(self)

    def action_report(self) -> None:
        """Open the report of the visit highlighted in the Visits tab (the latest by default)."""
        from inspectkit.tui.screens.report import ReportScreen

        table = self.query_one("#visits", DataTable)
        if table.row_count == 0:
            self.notify("No visit yet: start a walkdown first", severity="warning")
            return
        row = table.coordinate_to_cell_key(table.cursor_coordinate).row_key
        self.app.push_screen(ReportScreen(str(row.value)))

    def action_edit_site(self) -> None:
        if self.records is None:
            return

        def saved(site: object) -> None:
            if site is not None:
                self.app.store.save(site)  # type: ignore[arg-type]
                self.notify("Site saved")
                self.reload()

        self.app.push_screen(site_dialog(self.records.site), saved)

    def _edit(self, component: Component | None) -> None:
        assert self.records is not None

        def saved(record: object) -> None:
            if record is not None:
                self.app.store.save(record)  # type: ignore[arg-type]
                self.notify(f"{record.tag} saved")  # type: ignore[attr-defined]
                self.reload()

        parents = [
            c for c in self.records.components
            if c.retired_on is None and (component is None or c.id != component.id)
        ]
        near = self.highlighted_component()
        dialog = component_dialog(self.site_id, component, parents, near.kind if near else None)
        self.app.push_screen(dialog, saved)

    def action_add_component(self) -> None:
        if self.records is not None:
            self._edit(None)

    def action_edit_component(self) -> None:
        component = self.highlighted_component()
        if component is None:
            self.notify("Highlight a component in the tree first")
            return
        self._edit(component)

    def on_tree_node_selected(self, event: Tree.NodeSelected[str]) -> None:
        if event.node.data is not None:
            event.stop()
            self.action_edit_component()

    def action_retire_component(self) -> None:
        component = self.highlighted_component()
        if component is None:
            self.notify("Highlight a component in the tree first")
            return
        if component.retired_on is not None:
            self.notify(f"{component.tag} was retired on {component.retired_on}")
            return

        def answered(yes: bool | None) -> None:
            if yes:
                self.app.store.save(retired(component, self.app.today))
                self.notify(f"{component.tag} retired; its readings and findings are kept")
                self.reload()

        self.app.push_screen(
            ConfirmDialog(
                f"Retire {component.tag} ({component.kind.label})? It will no longer be "
                "inspected; its history stays on record.",
                yes_label="Retire",
            ),
            answered,
        )


def _not_judged(state: SiteState) -> Text:
    """Why the site has no verdict, and for a profile that cannot be read, the way out."""
    hint = "; pick another profile in Settings (F4)" if state.word == NO_PROFILE else ""
    return Text(f"{state.word}: {state.reason}{hint}")  # Text: a reason is never markup
