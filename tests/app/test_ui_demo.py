"""Demo data stays demo: the invented visits are marked so in the store, the app never writes
them to the outbox (the CLI still packs them when asked), the first start offers no demo site for
a new section, and the outbox is a visible folder in the user's documents, shown and changeable
in Settings."""

from __future__ import annotations

import os

import pytest
from stakeline.app.cli import main as cli
from stakeline.app.service.settings import OUTBOX_NAME, default_outbox, documents_folder


def finish_a_crew_visit(ui) -> str:
    """Create, read and finish one visit through the service; returns its uuid."""
    service = ui.app.service
    section = service.create_section("Orrin Brook", "XS9 glide")
    visit = service.start_visit(section["uuid"], today="2026-11-30")
    service.save_stakes(visit, line_left=100.0, line_right=100.0)
    for i, reading in enumerate([0.2, 0.8, 1.1, 0.7, 0.25]):
        service.save_reading(visit, float(i), str(reading))
    service.finish(visit, service.review(visit), "test visit")
    return visit


def test_demo_visits_are_marked_and_never_packed_by_the_app(ui, tmp_path):
    service = ui.app.service
    demo = service.store.visits()
    assert len(demo) == 6 and all(v["settings"] == {"demo": True} for v in demo)
    visit = finish_a_crew_visit(ui)
    path = service.write_package(visit)
    assert os.listdir(service.outbox()) == [os.path.basename(path)]  # the crew's visit only
    # the command line packs every finished visit, the invented ones included, when asked
    assert cli(["pack", "--store", service.store.path, "--outbox", str(tmp_path / "all")]) == 0
    assert len(os.listdir(tmp_path / "all")) == 7


def test_first_start_offers_no_demo_site(ui):
    home = ui.screen
    assert ui.app.manager.current == "home"
    assert home.ids.site_name.text == ""
    rows = {r.title.split("[/b]")[0][3:]: r for r in home.ids.sections.children}
    assert "invented demo data" in rows["XS1 riffle"].detail
    finish_a_crew_visit(ui)
    home.ids.site_name.text = ""
    ui.go("home")  # the crew's own site is offered from now on
    assert home.ids.site_name.text == "Orrin Brook"


def test_outbox_is_in_the_documents_shown_and_changeable(ui, tmp_path):
    service = ui.app.service
    documents = os.environ["XDG_DOCUMENTS_DIR"]
    assert service.outbox() == os.path.join(documents, OUTBOX_NAME)
    ui.go("settings")
    screen = ui.screen
    assert screen.ids.outbox.text == service.outbox()  # shown in full
    elsewhere = str(tmp_path / "usb stick")
    ui.type_text(screen.ids.outbox, "")
    screen.ids.outbox.text = elsewhere
    ui.tap(screen.ids.save)
    assert service.outbox() == elsewhere and screen.tone == "saved"
    screen.ids.outbox.text = ""  # empty: back to the default
    ui.tap(screen.ids.save)
    assert service.outbox() == os.path.join(documents, OUTBOX_NAME)
    assert service.settings()["outbox"] == ""


@pytest.mark.parametrize(
    "dirs, expected",
    [
        ('XDG_DOCUMENTS_DIR="$HOME/Dokumente"\n', "{home}/Dokumente"),
        ('XDG_DOCUMENTS_DIR="$HOME/"\n', "{home}/Documents"),  # "disabled" in the XDG spec
        (None, "{home}/Documents"),
    ],
)
def test_documents_folder_follows_the_xdg_user_dirs(tmp_path, dirs, expected):
    home, config = tmp_path / "home", tmp_path / "config"
    config.mkdir()
    if dirs is not None:
        (config / "user-dirs.dirs").write_text("# written by xdg-user-dirs-update\n" + dirs)
    environ = {"HOME": str(home), "XDG_CONFIG_HOME": str(config)}
    assert documents_folder(environ) == expected.format(home=home)
    assert default_outbox(environ) == os.path.join(expected.format(home=home), OUTBOX_NAME)
