"""Home: the sites and their cross-sections, last visit and status; start or continue a visit,
create a new section, open the settings."""

from __future__ import annotations

from kivy.properties import BooleanProperty, StringProperty
from kivy.uix.boxlayout import BoxLayout
from stakeline.app.screens.base import BaseScreen


class SectionRow(BoxLayout):
    """One section in the home list; fires ``on_choose`` when its button is tapped."""

    title = StringProperty("")
    detail = StringProperty("")
    button_text = StringProperty("")
    figures_visit = StringProperty("")
    open_visit = BooleanProperty(False)
    dump_key = StringProperty("")
    __events__ = ("on_choose", "on_figures")

    def on_choose(self, *_args):
        """Default handler: nothing (the home screen binds its own)."""

    def on_figures(self, *_args):
        """Default handler: nothing (the home screen opens the office figures)."""


class HomeScreen(BaseScreen):
    """The list of sections with a start/continue button each, and the new-section form."""

    resume_text = StringProperty("")

    def refresh(self) -> None:
        """Rebuild the section list from the store."""
        rows = self.service.overview()
        box = self.ids.sections
        box.clear_widgets()
        for row in rows:
            status = row["last_status"] or "no visits yet"
            if row["open_visit"]:
                status = "visit open"
            if row.get("demo"):
                status += " · invented demo data"
            item = SectionRow(
                title=f"[b]{row['section']}[/b]  ·  {row['site']}",
                detail=f"Last visit {row['last_date'] or '—'}  ·  {status}",
                button_text="Continue visit" if row["open_visit"] else "Start visit",
                open_visit=bool(row["open_visit"]),
                figures_visit=row["finished_visit"] or "",
                dump_key=f"section:{row['section']}",
            )
            item.bind(on_choose=lambda _w, r=row: self.choose(r))
            item.bind(on_figures=lambda w: self.figures(w.figures_visit))
            box.add_widget(item)
        if not self.ids.site_name.text:
            self.ids.site_name.text = self.service.last_site()
        resume = self.service.resume_point()
        self.resume_text = ""
        if resume:
            visit = self.service.visit(resume[0])
            where = "" if resume[1] is None else f" at station {resume[1]:g} {visit['unit']}"
            self.resume_text = f"Continue {visit['section']} ({visit['date']}){where}"

    def choose(self, row: dict) -> None:
        """Continue the section's open visit, or start a new one."""
        if row["open_visit"]:
            self.app.open_visit(row["open_visit"], "readings")
            return
        visit = self.attempt(self.service.start_visit, row["section_uuid"])
        if visit:
            self.app.open_visit(visit, "stakes")

    def figures(self, visit_uuid: str) -> None:
        """Open the office figures of a finished visit (Back returns home)."""
        if visit_uuid:
            self.app.visit_uuid = visit_uuid
            self.app.go("detail", back="home")

    def resume(self) -> None:
        """Go back to the visit and station that were open."""
        resume = self.service.resume_point()
        if resume:
            self.app.visit_uuid = resume[0]
            self.app.go("readings", station=resume[1])

    def create_section(self) -> None:
        """Create the typed section (and site), start a visit on it, go to the stakes (Enter in
        either box does the same); an empty box gets the keyboard."""
        site, name = self.ids.site_name, self.ids.section_name
        section = self.attempt(self.service.create_section, site.text, name.text)
        if not section:
            empty = next((f for f in (site, name) if not f.text.strip()), None)
            if empty is not None:
                self.focus(empty)
            return
        name.text = ""
        visit = self.service.start_visit(section["uuid"])
        self.app.open_visit(visit, "stakes")
