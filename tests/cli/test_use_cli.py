"""`siderod use`: sets or clears the target in use over a real control socket."""

from __future__ import annotations

import asyncio
import os

from siderod.service.control import ControlServer
from siderod.service.protocol import Op


class _FakeService:
    def __init__(self) -> None:
        self.requests = []

    async def handle_request(self, request):
        self.requests.append(request)
        assert request.op == Op.USE
        return {"target": request.target}


async def _run_cli(*words: str) -> int:
    from siderod.cli.main import main

    return await asyncio.to_thread(main, list(words))


async def test_use_sets_and_clears(tmp_path, capsys):
    fake = _FakeService()
    run_dir = tmp_path / "run" / "siderod"
    sock, lock = run_dir / "control.sock", run_dir / "service.lock"
    async with ControlServer(sock, fake.handle_request, lock) as server:
        path = os.fspath(server.socket_path)
        assert await _run_cli("use", "Demo Nebula B", "--socket", path) == 0
        assert "target in use: Demo Nebula B" in capsys.readouterr().out
        assert await _run_cli("use", "--none", "--socket", path) == 0
        assert "no target in use" in capsys.readouterr().out
        assert await _run_cli("use", "--socket", path) == 2
        assert "give a TARGET, or --none" in capsys.readouterr().err
    assert [r.target for r in fake.requests] == ["Demo Nebula B", None]
