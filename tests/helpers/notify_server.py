"""A small recording org.freedesktop.Notifications service on a (private) session bus.

    python notify_server.py RECORD_FILE [--commands]   (bus address from $DBUS_SESSION_BUS_ADDRESS)

Owns the name, prints "ready" once it does, and appends one JSON line per Notify call to
RECORD_FILE: id, app_name, summary, body, actions, hints (variant values unwrapped), expire_timeout.
It is a test fake; nothing here is meant to look like a real notification daemon.

With ``--commands`` it also reads lines from stdin, as a user at the desktop would act:

    press LABEL    press the button labelled LABEL on the newest notification that has one
                   (emits ActionInvoked(id, action key)); prints "pressed ID KEY" or "no LABEL"

No ``from __future__ import annotations`` here: dbus-fast reads the D-Bus signatures from the
string annotations at class-creation time.
"""

import asyncio
import itertools
import json
import sys
import time

from dbus_fast.aio import MessageBus
from dbus_fast.service import ServiceInterface, dbus_method, dbus_signal

BUS_NAME = "org.freedesktop.Notifications"
OBJECT_PATH = "/org/freedesktop/Notifications"


class RecordingNotifications(ServiceInterface):
    def __init__(self, record_path):
        super().__init__(BUS_NAME)
        self._record_path = record_path
        self._ids = itertools.count(1)
        self.shown = []  # (id, actions) of every notification, oldest first

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
        notification_id = next(self._ids)
        record = {
            "id": notification_id,
            "app_name": app_name,
            "app_icon": app_icon,
            "summary": summary,
            "body": body,
            "actions": list(actions),
            "hints": {k: _plain(v.value) for k, v in hints.items()},
            "expire_timeout": expire_timeout,
            "replaces_id": replaces_id,
            "received_unix": time.time(),
        }
        with open(self._record_path, "a", encoding="utf-8") as f:
            f.write(json.dumps(record) + "\n")
        self.shown.append((notification_id, list(actions)))
        return notification_id

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
    def ActionInvoked(self, notification_id, action_key) -> "us":  # noqa: N802, F821
        return [notification_id, action_key]

    def press(self, label):
        """Emit ActionInvoked for the button labelled ``label`` on the newest notification with one."""
        for notification_id, actions in reversed(self.shown):
            pairs = dict(zip(actions[1::2], actions[0::2], strict=False))  # label -> key
            if label in pairs:
                self.ActionInvoked(notification_id, pairs[label])
                return f"pressed {notification_id} {pairs[label]}"
        return f"no {label}"


def _plain(value):
    if isinstance(value, bytes):
        return value.decode("utf-8", "replace")
    return value


async def _main(record_path, commands):
    bus = await MessageBus().connect()
    service = RecordingNotifications(record_path)
    bus.export(OBJECT_PATH, service)
    await bus.request_name(BUS_NAME)
    print("ready", flush=True)
    if commands:
        asyncio.get_running_loop().create_task(_read_commands(service))
    try:
        await bus.wait_for_disconnect()
    except (EOFError, OSError):
        pass  # the test tore the bus down first


async def _read_commands(service):
    loop = asyncio.get_running_loop()
    while True:
        line = await loop.run_in_executor(None, sys.stdin.readline)
        if not line:
            return
        verb, _, rest = line.strip().partition(" ")
        if verb == "press":
            print(service.press(rest), flush=True)


if __name__ == "__main__":
    asyncio.run(_main(sys.argv[1], "--commands" in sys.argv[2:]))
