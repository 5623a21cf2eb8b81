"""``[mount.link]`` and ``[mount] other_targets``: defaults, values and file:line: key messages."""

from __future__ import annotations

import pytest

from siderod.common.errors import ConfigErrors
from siderod.files.config import parse_config

SITE = '[site]\nname = "Test site"\nlatitude = 56.2\nlongitude = -3.7\n'


def _parse(text: str):
    return parse_config(SITE + text, "/cfg/site.toml", read_file=lambda path: "")


def test_no_link_section_means_no_link():
    mount = _parse('[mount]\nkind = "german-equatorial"\n').mount
    assert mount.link.enabled is False and mount.other_targets == "info"


def test_link_defaults_are_the_loopback_and_the_standard_port():
    text = '[mount]\nkind = "german-equatorial"\n[mount.link]\ndevice = "Telescope Simulator"\n'
    link = _parse(text).mount.link
    # 7624 is the port registered for INDI (IANA service name "indi").
    assert (link.enabled, link.host, link.port) == (True, "127.0.0.1", 7624)
    assert link.device == "Telescope Simulator"
    off = _parse('[mount.link]\nenabled = false\nhost = "scope.local"\nport = 7700\n').mount.link
    assert (off.enabled, off.host, off.port, off.device) == (False, "scope.local", 7700, "")


@pytest.mark.parametrize(
    ("text", "where"),
    [
        ('[mount.link]\nport = 0\n', "site.toml:6: mount.link.port"),
        ('[mount.link]\nport = 7624.5\n', "site.toml:6: mount.link.port"),
        ('[mount.link]\ndevice = 3\n', "site.toml:6: mount.link.device"),
        ('[mount.link]\nenabled = "yes"\n', "site.toml:6: mount.link.enabled"),
        ('[mount.link]\nspeed = 3\n', "site.toml:6: mount.link.speed"),
        ('[mount]\nother_targets = "quiet"\n', "site.toml:6: mount.other_targets"),
    ],
)
def test_bad_link_values_name_file_line_and_key(text, where):
    with pytest.raises(ConfigErrors) as info:
        _parse(text)
    assert where in str(info.value)
