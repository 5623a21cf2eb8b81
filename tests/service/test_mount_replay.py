"""The INDI link against a recorded exchange of the real protocol, captured from the simulator.

``tests/reference/indi-simulator-slew.xml`` is what indiserver sent one client while the simulated
telescope slewed (captured by ``tests/reference/builders/capture_indi_exchange.py``). A small fake
server replays it. The simulator always reports its pier side, so the case of a driver that does
not is tested here by replaying the same exchange with every TELESCOPE_PIER_SIDE vector taken out.
"""

from __future__ import annotations

import asyncio
import contextlib
import re
from dataclasses import replace
from pathlib import Path

import pytest
from helpers import service_fakes as fakes

from siderod.common.clock import SystemClock
from siderod.common.model import EventKind, MountLink
from siderod.plan.mount import LinkState, MountDue
from siderod.service.mount import IndiLink, MountWatch

RECORDING = Path(__file__).resolve().parent.parent / "reference" / "indi-simulator-slew.xml"
DEVICE = "Telescope Simulator"
WAIT_SECONDS = 20.0


def _recording(*, without: str | None = None) -> bytes:
    text = RECORDING.read_text()
    if without is not None:
        # Every element (def..., set..., del...) that names the property, whole.
        text = re.sub(rf'<(\w+) device="{DEVICE}" name="{without}".*?</\1>\s*', "", text, flags=re.S)
    return text.encode()


def _last_pointing(data: bytes) -> tuple[float, float]:
    blocks = re.findall(rb'name="EQUATORIAL_EOD_COORD".*?name="RA">\s*([-\d.]+)\s*</oneNumber>\s*'
                        rb'<oneNumber name="DEC">\s*([-\d.]+)', data, flags=re.S)
    ra, dec = blocks[-1]
    return float(ra), float(dec)


class _ReplayServer:
    def __init__(self, payload: bytes) -> None:
        self.payload = payload
        self.received = b""
        self.server = None
        self.port = 0
        self.writers = []

    async def __aenter__(self):
        self.server = await asyncio.start_server(self._serve, "127.0.0.1", 0)
        self.port = self.server.sockets[0].getsockname()[1]
        return self

    async def __aexit__(self, *exc):
        self.server.close()
        for writer in self.writers:
            writer.close()
            with contextlib.suppress(ConnectionError):
                await writer.wait_closed()
        await self.server.wait_closed()

    async def _serve(self, reader, writer):
        self.writers.append(writer)
        with contextlib.suppress(ConnectionError, asyncio.CancelledError):
            self.received += await reader.readuntil(b">")
            writer.write(self.payload)
            await writer.drain()
            while data := await reader.read(4096):
                self.received += data


async def _linked_watch(payload: bytes):
    clock = SystemClock()
    config = fakes.make_config()
    recorder = []

    async def send(message):
        recorder.append(message)

    server = _ReplayServer(payload)
    await server.__aenter__()
    link_settings = MountLink(enabled=True, port=server.port, device=DEVICE)
    config = replace(config, mount=replace(config.mount, link=link_settings))
    watch = MountWatch(config, clock, send)
    link = IndiLink("127.0.0.1", server.port, DEVICE, watch, clock)
    tasks = [asyncio.get_running_loop().create_task(watch.run()),
             asyncio.get_running_loop().create_task(link.run())]
    return watch, server, tasks


async def _wait(predicate, what):
    for _ in range(int(WAIT_SECONDS / 0.02)):
        if predicate():
            return
        await asyncio.sleep(0.02)
    raise AssertionError(f"timed out waiting for {what}")


async def _close(server, tasks):
    for task in tasks:
        task.cancel()
    for task in tasks:
        with contextlib.suppress(asyncio.CancelledError):
            await task
    await server.__aexit__()


@pytest.mark.slow
async def test_replayed_simulator_exchange_gives_the_reported_pointing_side_and_tracking():
    payload = _recording()
    watch, server, tasks = await _linked_watch(payload)
    try:
        ra, dec = _last_pointing(payload)
        await _wait(lambda: watch.pointing is not None and watch.pointing.ra_hours == pytest.approx(ra)
                    and watch.pointing.tracking is True, "the replayed pointing")
        view = watch.view()
        assert (view.link_state, view.pier_side, view.slewing) == ("linked", "west", False)
        assert view.dec_deg == pytest.approx(dec)
        assert server.received.count(b"<getProperties") >= 1
        assert re.sub(rb"<getProperties[^>]*/>\s*", b"", server.received).strip() == b""  # nothing else
    finally:
        await _close(server, tasks)


@pytest.mark.slow
async def test_a_driver_without_pier_side_falls_back_to_the_hour_angle_and_says_so():
    payload = _recording(without="TELESCOPE_PIER_SIDE")
    assert b"TELESCOPE_PIER_SIDE" not in payload
    watch, server, tasks = await _linked_watch(payload)
    try:
        await _wait(lambda: watch.pointing is not None and watch.pointing.tracking is True, "the pointing")
        view = watch.view()
        assert view.link_state == LinkState.LINKED.value
        assert view.pier_side == "unknown" and view.counterweight_up is None
        # The alert text says the hour angle alone is used.
        due = MountDue(EventKind.FLIP_DUE, watch._clock.now_utc(), 0.0, watch._clock.now_utc(), 5 / 60)
        _, body = watch._flip_text(due, watch.pointing, watch._clock.now_utc())
        assert "does not report the pier side" in body and "hour angle alone" in body
        from siderod.view.mountpanel import mount_panel_lines

        panel = "\n".join(line.plain for line in mount_panel_lines(view, 300))
        assert "pier side ?" in panel and "hour angle alone" in panel
    finally:
        await _close(server, tasks)


async def test_siderod_now_never_connects_to_the_mount(tmp_path):
    from siderod.cli.main import main

    accepted = []

    async def on_connect(reader, writer):
        accepted.append(1)
        writer.close()

    server = await asyncio.start_server(on_connect, "127.0.0.1", 0)
    port = server.sockets[0].getsockname()[1]
    demo = Path(__file__).resolve().parents[2] / "siderod" / "demo"
    (tmp_path / "demo-targets.toml").write_text((demo / "demo-targets.toml").read_text())
    text = (demo / "demo.toml").read_text().replace(
        "[alerts]\n", f'[mount.link]\nport = {port}\ndevice = "{DEVICE}"\n\n[alerts]\n', 1)
    (tmp_path / "config.toml").write_text(text)
    try:
        code = await asyncio.to_thread(main, ["now", "--config", str(tmp_path / "config.toml"), "--json"])
        await asyncio.sleep(0.2)
    finally:
        server.close()
        await server.wait_closed()
    assert code == 0 and accepted == []
