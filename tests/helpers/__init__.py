"""Test helpers: fakes and servers the tests drive; never collected as tests."""
