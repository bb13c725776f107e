"""Explore: many place-and-route runs of one board, on local processes or a Dask cluster.

- :mod:`explore.tasks`: one task, one place-and-route of one board, as TOML text in and out;
- :mod:`explore.runners`: where tasks run (local processes, a Dask distributed scheduler),
  with retries for dead workers and a clean stop on Ctrl-C;
- :mod:`explore.sweep`: every combination of seeds and penalties, ranked (``elbowroom sweep``);
- :mod:`explore.shrink`: the smallest rectangular outline that places and routes clean
  (``elbowroom shrink``);
- :mod:`explore.plot`: the sweep's bends-against-vias picture;
- :mod:`explore.cli`: the two commands, registered on the ``elbowroom`` command line.
"""
