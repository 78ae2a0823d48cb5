"""The ``glowtemp`` command: measuring, batch work and the firing log from a terminal.

Owns the command and its sub-commands (:mod:`.cli`, :mod:`.logbook_cli`, :mod:`.upkeep_cli`),
many photos on every core (:mod:`.batch`) and a firing made from a timed series of photos
(:mod:`.series`). Handlers import what they need when they run, so ``glowtemp measure`` loads
only the measuring path.

May import: every other area except :mod:`glowtemp.render`, and the web app
(:mod:`glowtemp.web`, the other shell).
"""
