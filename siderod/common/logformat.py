"""The one format of siderod's log lines, wherever they are written (stderr, journald, the board)."""

__all__ = ["LOG_FORMAT"]

#: ISO 8601 date and time (logging's default asctime), level, logger name, message.
LOG_FORMAT = "%(asctime)s %(levelname)s %(name)s: %(message)s"
