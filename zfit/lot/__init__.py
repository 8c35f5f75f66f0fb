"""Lots of parts: identify many sweeps, check each against limits, summarise the lot.

What enters: many sweep files (files, folders, glob patterns) and, optionally,
a limits file (`zfit.io._limits_file.read_limits`).  What leaves: a
`PartSummary` per part (its figures, built from its `Identification`), its
verdict under the decision rule, the lot's statistics, and the summary files
``summary.csv``, ``lot.csv``, ``lot.json`` beside each part's
``zfit.identify/1`` JSON.

Modules, in the order of a run:

``_inputs``          the sweep files named by the inputs, and their output names
``_tasks``           `ReadOptions`, `PartTask`, `PartOutcome`: the work of one part, picklable
``_manifest``        the files the batch owns in its output folder (``.zfit-batch.json``)
``_reuse``           an up-to-date result of an earlier run (same content), reused instead of redone
``_worker``          one part: read, identify, write its JSON and plot, never raise
``_warning_routing`` warnings routed to the part whose thread raised them
``_threads``         one BLAS thread per worker (small problems, many processes)
``_executors``       in this process, local worker processes, or a Dask cluster
``_part_summary``    `PartSummary`: what the lot keeps of a part's result
``_conformity``      the decision rule: guarded acceptance (JCGM 106:2012)
``_rows``            `PartRow`: a part's figures and verdict
``_statistics``      mean, spread and process capability per quantity
``_lot_files``       the text of summary.csv, lot.csv, lot.json and the printed summary
``_progress``        the progress bar on standard error
``_run``             `run_batch`: the run from inputs to summary files
``_simulated_lot``   invented parts written as instrument files (tests, benchmarks)
"""
