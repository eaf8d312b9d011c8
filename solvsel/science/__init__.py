"""The science layer: published methods on plain numbers and catalog records (Hansen
arithmetic, miscibility, the exact blend optimiser, sphere fits, structure estimates, HLB,
emulsion physics, formulations).  Imports only :mod:`solvsel.data` and :mod:`solvsel.errors`;
never the rules, the jobs or a front end."""
