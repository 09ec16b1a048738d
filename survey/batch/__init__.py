"""Qualifying many sites at once (README, "Batch runs"; DEVELOPERS, "Batch
runs"): ``inputs`` (the sites CSV or a folder of site files), ``sky`` (the
satellites propagated once per window, Earth-fixed, shared by every site),
``work`` (one site assessed on a worker), ``runner`` (this process, local
processes or a Dask cluster), ``results`` (the results CSV), ``register`` (the
SQLite site register), ``command`` and ``register_command`` (the ``batch`` and
``register`` commands)."""
