"""AppTest of the Zones page: a bad folder path gives an error and changes nothing."""

from __future__ import annotations

from test_app_support import assert_no_exception, new_app, texts


def test_bad_zones_folder_gives_an_error_and_keeps_the_page_running(tmp_path):
    at = new_app(page="pages/zones.py")
    assert_no_exception(at)
    at.text_input(key="zn_folder").set_value(str(tmp_path / "missing"))
    [b for b in at.get("button") if getattr(b, "label", "") == "Open the folder"][0].click()
    at.run()
    assert_no_exception(at)
    assert any("zones folder" in t.lower() for t in texts(at, "error"))
    assert "zones" not in at.session_state
