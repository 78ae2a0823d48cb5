"""The synthetic renderer: photos of glow through modelled cameras, for tests, benchmarks and
the demo images. Never on the measuring path.

Owns camera sensitivities, white balance and colour matrices (:mod:`.synthetic_camera`),
scenes (:mod:`.synthetic_scenes`), exposure after ISO 12232 (:mod:`.synthetic_exposure`),
rendering to JPEG, PNG and DNG (:mod:`.synthetic`, :mod:`.synthetic_raw`), building the camera
prior's tables (:mod:`.population_build`) and the held-out validation pipeline
(:mod:`.heldout`). May use colour-science.

May import: :mod:`glowtemp.physics`, :mod:`glowtemp.images` and :mod:`glowtemp.estimation`.
No other area imports it; only tests, benchmarks and scripts do.
"""
