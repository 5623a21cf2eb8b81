"""Capture what an INDI server sends a client while the simulated telescope slews.

    python tests/reference/builders/capture_indi_exchange.py tests/reference/indi-simulator-slew.xml

Needs Debian's indi-bin (indiserver, indi_simulator_telescope, indi_setprop). Starts a server on a
loopback port, connects the simulator, sets the invented demo site (Corrie Hill Observatory), sends
one getProperties as a client, slews to M31's place of date (RA 0.7372 h, Dec +41.42) and keeps
every byte the server sends until the slew has ended, then stops the server. The output starts with
an XML comment naming this script and the indi-bin version.
"""

from __future__ import annotations

import asyncio
import os
import subprocess
import sys
import tempfile

PORT = 7761
DEVICE = "Telescope Simulator"


async def capture(out_path: str) -> None:
    home = tempfile.mkdtemp(prefix="indi-capture-")
    env = dict(os.environ, HOME=home)
    server = subprocess.Popen(["indiserver", "-p", str(PORT), "-u", f"/indi-capture-{PORT}",
                               "indi_simulator_telescope"], stdout=subprocess.DEVNULL,
                              stderr=subprocess.DEVNULL, env=env)
    try:
        await asyncio.sleep(1.0)

        def setprop(spec: str) -> None:
            subprocess.run(["indi_setprop", "-p", str(PORT), spec], check=True)

        setprop(f"{DEVICE}.CONNECTION.CONNECT=On")
        await asyncio.sleep(1.0)
        setprop(f"{DEVICE}.GEOGRAPHIC_COORD.LAT;LONG;ELEV=56.2083;356.3125;212")
        setprop(f"{DEVICE}.ON_COORD_SET.TRACK=On")
        reader, writer = await asyncio.open_connection("127.0.0.1", PORT)
        writer.write(b'<getProperties version="1.7"/>\n')
        await writer.drain()
        chunks: list[bytes] = []

        async def read() -> None:
            while data := await reader.read(65536):
                chunks.append(data)

        task = asyncio.create_task(read())
        await asyncio.sleep(1.5)
        setprop(f"{DEVICE}.EQUATORIAL_EOD_COORD.RA;DEC=0.7372;41.42")
        for _ in range(120):
            await asyncio.sleep(0.5)
            text = b"".join(chunks)
            last = text.rfind(b'name="EQUATORIAL_EOD_COORD" state="')
            if last > 0 and b'state="Ok"' in text[last:last + 60]:
                await asyncio.sleep(1.0)
                break
        writer.close()
        task.cancel()
    finally:
        server.kill()
        server.wait()
    version = subprocess.run(["dpkg-query", "-W", "-f=${Version}", "indi-bin"], capture_output=True,
                             text=True).stdout.strip() or "unknown"
    header = (f"<!-- Captured by tests/reference/builders/capture_indi_exchange.py from Debian indi-bin "
              f"{version}: indiserver + indi_simulator_telescope, one client's getProperties, a slew to "
              f"RA 0.7372 h Dec +41.42 (of date) at the invented demo site. -->\n").encode()
    with open(out_path, "wb") as out:
        out.write(header + b"".join(chunks))


if __name__ == "__main__":
    asyncio.run(capture(sys.argv[1]))
