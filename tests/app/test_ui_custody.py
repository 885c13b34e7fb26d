"""Chain of custody in the app: the device's signing key pair exists from the first start (and
stays the same on every later start), Settings shows the device id and the key's fingerprint for
the crew to read to the office over the phone, and a tap writes the device key file into the
outbox, where the office's ``stakeline devices trust`` takes it."""

from __future__ import annotations

import os
import re
import stat

from stakeline.app.service import open_service
from stakeline.store import Store
from stakeline.store.signing import read_device_key

FINGERPRINT = re.compile(r"^[0-9a-f]{4}(-[0-9a-f]{4}){3}$")  # 16 hex digits in four groups


def test_the_key_pair_is_made_at_first_start_and_kept(tmp_path):
    folder = str(tmp_path / "device")
    first = open_service(folder, outbox=str(tmp_path / "outbox"))
    own = [d for d in first.store.devices() if d["own"]]
    key = first.store.device_key()
    first.close()
    assert len(own) == 1 and own[0]["public_key"] == key["public_key"]
    # the private half stays in the data folder, readable by the app's user only
    assert os.path.dirname(key["key_file"]) == folder
    assert stat.S_IMODE(os.stat(key["key_file"]).st_mode) == 0o600
    again = open_service(folder, outbox=str(tmp_path / "outbox"))
    assert again.device_custody()["fingerprint"] == key["fingerprint"]  # safe on every start
    assert len([d for d in again.store.devices() if d["own"]]) == 1
    again.close()


def test_settings_show_the_fingerprint_and_write_the_key_file(ui, tmp_path):
    service = ui.app.service
    key = service.store.device_key()
    ui.go("home")
    ui.tap(ui.screen.ids.settings)
    screen = ui.screen
    assert ui.app.manager.current == "settings"
    assert screen.ids.fingerprint_row.value == key["fingerprint"]
    assert FINGERPRINT.match(screen.fingerprint)
    assert screen.ids.device_row.value == service.store.device_id
    shown = ui.texts()
    assert "Key fingerprint" in shown and "over the phone" in shown
    ui.tap(screen.ids.write_key)
    path = os.path.join(service.outbox(), f"{service.store.device_id}.stakeline-device-key.json")
    assert screen.tone == "saved" and key["fingerprint"] in screen.message
    written = read_device_key(path)
    assert written["public_key"] == key["public_key"]
    assert written["device"] == service.store.device_id
    assert stat.S_IMODE(os.stat(path).st_mode) == 0o644  # a public key: readable by all
    # the office trusts the device from the file the tablet wrote
    with Store.open(tmp_path / "office.sqlite") as office:
        trusted = office.trust_device(path, by="office clerk")
        assert trusted["fingerprint"] == key["fingerprint"] and trusted["trusted_by"]
    screen.ids.scroller.scroll_y = 0  # the custody part is at the end of the settings
    ui.frames(2)
    ui.screenshot("settings-custody")
