"""siderod: a sidereal clock and alert daemon for observers.

It keeps local mean and apparent sidereal time for one site, watches a list of targets and
sends desktop notifications at culmination, altitude crossings, hour-angle marks and when a
German equatorial mount's meridian flip is due. This module imports nothing heavy, so that
``siderod now`` and ``siderod status`` start quickly.
"""

__version__ = "0.1.0"
