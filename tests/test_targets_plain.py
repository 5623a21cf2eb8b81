"""The plain-angle shortcut of the CSV reader gives exactly what the full angle parser gives."""

from __future__ import annotations

import random

import pytest

from siderod.astro.angles import AngleParseError, parse_angle_deg
from siderod.files.targets import _plain_angle


def _full(text, kind):
    try:
        return parse_angle_deg(text, kind=kind)
    except AngleParseError:
        return None


@pytest.mark.parametrize("kind", ["ra", "dec"])
def test_plain_forms_match_the_full_parser_bit_for_bit(kind):
    rng = random.Random(7)
    texts = []
    for _ in range(3000):
        value = rng.uniform(-400, 400)
        digits = rng.choice([0, 1, 3, 5, 8])
        texts.append(f"{value:.{digits}f}{rng.choice(['', 'd', 'h'])}")
    texts += ["0", "-0", "+5.5h", "24h", "23.99999h", "360d", "359.9d", "90", "-90", "90.0001", "5.", "1e3"]
    for text in texts:
        fast = _plain_angle(text, kind)
        if fast is not None:  # the shortcut answers only when it is sure; otherwise the full parser reads it
            assert fast == _full(text, kind), text
