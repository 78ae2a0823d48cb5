"""The firing log: firings, photos and readings kept safe, and what is made from them.

Owns the SQLite store with its schema, migrations and fields (:mod:`.logbook`,
:mod:`.logbook_schema`, :mod:`.logbook_fields`), content-addressed photos
(:mod:`.photo_store`), the declared shape of a stored result (:mod:`.result_schema`,
:mod:`.json_text`), the firing curve and its chart (:mod:`.curve`, :mod:`.curve_chart`), CSV
export and bundles (:mod:`.logbook_csv`, :mod:`.bundle`), a firing's trusted values as
profile pairs (:mod:`.logbook_pairs`), backups (:mod:`.backup`), paired devices
(:mod:`.sessions`), the demo firing (:mod:`.demo`), and the data folder: where it is, its
lock and its storage errors (:mod:`.datadir`, :mod:`.folder_lock`, :mod:`.storage`).

May import: :mod:`glowtemp.physics`, :mod:`glowtemp.images` and :mod:`glowtemp.estimation`.
"""
