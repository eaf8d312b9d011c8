"""The data layer: the bundled tables and a user's own rows (:mod:`.catalog`), the small
filter language over them (:mod:`.query`) and the demo scenario (:mod:`.scenario`).
Imports nothing else of solvsel but :mod:`solvsel.errors`."""
