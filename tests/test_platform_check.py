"""The one-line hint when Qt's X11 plugin cannot load on Linux (checked without starting Qt)."""
from editor.app.platform_check import XCB_PACKAGES, xcb_plugin, xcb_problem


def failing_load(path):
    raise OSError("libxcb-cursor.so.0: cannot open shared object file: No such file or directory")


def test_a_missing_library_gives_one_line_naming_the_packages():
    if xcb_plugin() is None:  # a Qt build without the X11 plugin has nothing to check
        assert xcb_problem("linux", {}, load=failing_load) is None
        return
    text = xcb_problem("linux", {}, load=failing_load)
    assert text is not None and "\n" not in text
    assert "libxcb-cursor.so.0" in text and all(package in text for package in XCB_PACKAGES)


def test_no_hint_when_the_plugin_loads_or_is_not_used():
    assert xcb_problem("linux", {}, load=lambda path: None) is None
    assert xcb_problem("linux", {"QT_QPA_PLATFORM": "offscreen"}, load=failing_load) is None
    assert xcb_problem("darwin", {}, load=failing_load) is None
