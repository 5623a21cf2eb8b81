"""Pure planning: site, targets and rules in, sky states, events and planned alerts out. No I/O."""
