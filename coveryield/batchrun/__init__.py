"""Many catchments at once: one task per plan file, run on a Dask cluster.

The package is split by job, from the bottom up:

* :mod:`.rows` — the batch table's rows, derived from :meth:`Comparison.summary` (outputs).
* :mod:`.layout` — the output folder of a batch: which plan files, which sub-folder each gets,
  what counts as complete, the record of inputs that ``--resume`` trusts, atomic table writes.
* :mod:`.task` — the work of one catchment on a worker: compare, write its folder, hand back
  the summary (no Dask import).
* :mod:`.runner` — the driver: a Dask client, the futures, progress, the batch tables;
  :func:`coveryield.batch` is :func:`.runner.batch`.

Only :mod:`.runner` imports ``dask.distributed``, and only when a batch starts, so ``compare``,
the dashboard and ``coveryield --help`` never load it. Results are screening estimates, to be
confirmed by licensed hydrological practice and local regulations.
"""
