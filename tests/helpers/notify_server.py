"""A small recording org.freedesktop.Notifications service on a (private) session bus.

    python notify_server.py RECORD_FILE      (bus address from $DBUS_SESSION_BUS_ADDRESS)

Owns the name, prints "ready" once it does, and appends one JSON line per Notify call to
RECORD_FILE: app_name, summary, body, actions, hints (variant values unwrapped), expire_timeout.
It is a test fake; nothing here is meant to look like a real notification daemon.

No ``from __future__ import annotations`` here: dbus-fast reads the D-Bus signatures from the
string annotations at class-creation time.
"""

import asyncio
import itertools
import json
import sys

from dbus_fast.aio import MessageBus
from dbus_fast.service import ServiceInterface, dbus_method, dbus_signal

BUS_NAME = "org.freedesktop.Notifications"
OBJECT_PATH = "/org/freedesktop/Notifications"


class RecordingNotifications(ServiceInterface):
    def __init__(self, record_path):
        super().__init__(BUS_NAME)
        self._record_path = record_path
        self._ids = itertools.count(1)

    @dbus_method()
    def Notify(  # noqa: N802 -- D-Bus method names are fixed by the specification
        self,
        app_name: "s",  # noqa: F821
        replaces_id: "u",  # noqa: F821
        app_icon: "s",  # noqa: F821
        summary: "s",  # noqa: F821
        body: "s",  # noqa: F821
        actions: "as",  # noqa: F821, F722
        hints: "a{sv}",  # noqa: F821, F722
        expire_timeout: "i",  # noqa: F821
    ) -> "u":  # noqa: F821
        record = {
            "app_name": app_name,
            "app_icon": app_icon,
            "summary": summary,
            "body": body,
            "actions": list(actions),
            "hints": {k: _plain(v.value) for k, v in hints.items()},
            "expire_timeout": expire_timeout,
        }
        with open(self._record_path, "a", encoding="utf-8") as f:
            f.write(json.dumps(record) + "\n")
        return next(self._ids)

    @dbus_method()
    def GetCapabilities(self) -> "as":  # noqa: N802, F821, F722
        return ["body", "actions"]

    @dbus_method()
    def GetServerInformation(self) -> "ssss":  # noqa: N802, F821
        return ["siderod-test-recorder", "siderod", "0.1", "1.2"]

    @dbus_method()
    def CloseNotification(self, notification_id: "u") -> None:  # noqa: N802, F821
        return None

    @dbus_signal()
    def NotificationClosed(self) -> "uu":  # noqa: N802, F821
        return [0, 0]

    @dbus_signal()
    def ActionInvoked(self) -> "us":  # noqa: N802, F821
        return [0, ""]


def _plain(value):
    if isinstance(value, bytes):
        return value.decode("utf-8", "replace")
    return value


async def _main(record_path):
    bus = await MessageBus().connect()
    bus.export(OBJECT_PATH, RecordingNotifications(record_path))
    await bus.request_name(BUS_NAME)
    print("ready", flush=True)
    try:
        await bus.wait_for_disconnect()
    except (EOFError, OSError):
        pass  # the test tore the bus down first


if __name__ == "__main__":
    asyncio.run(_main(sys.argv[1]))
