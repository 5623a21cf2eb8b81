"""The command line: one module per verb (heavy imports inside each verb's run())."""

#: Printed on stderr by a verb that found no configuration and uses the bundled demo.
DEMO_NOTICE = ("siderod: no configuration given, so the bundled demo is used (Corrie Hill Observatory, an "
               "invented site); write your own with `siderod init`, or pass --config FILE")
