"""``leosite batch --scheduler ADDRESS`` on a real Dask distributed cluster
(README, "Running a batch on a cluster"): a ``LocalCluster`` of worker
processes started here gives the same results CSV, byte for byte, as
``--workers 1``; the shared sky is scattered to the workers once, not sent with
each task; without Dask installed the option says how to get it."""

from __future__ import annotations

import sys

import pytest

from survey.cli import main

from .test_batch import GOOD_ROWS, HEADER, WINDOW

distributed = pytest.importorskip("distributed")


def test_a_local_cluster_gives_the_same_csv_as_one_process(tmp_path, capsys, monkeypatch):
    sites = tmp_path / "sites.csv"
    rows = GOOD_ROWS + [f"extra-{i},{-50 + 10 * i},{30 * i - 170},,,,," for i in range(11)]
    sites.write_text(HEADER + "\n".join(rows) + "\n", "utf-8")
    local = tmp_path / "local.csv"
    assert main(["batch", str(sites), "--out", str(local), "--workers", "1", *WINDOW]) == 0
    scattered, submitted = [], []
    real_scatter, real_submit = distributed.Client.scatter, distributed.Client.submit

    def scatter(self, data, *a, **k):
        scattered.append(type(data).__name__)
        return real_scatter(self, data, *a, **k)

    def submit(self, func, *args, **k):
        submitted.append([type(x).__name__ for x in args])
        return real_submit(self, func, *args, **k)

    monkeypatch.setattr(distributed.Client, "scatter", scatter)
    monkeypatch.setattr(distributed.Client, "submit", submit)
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None) as cluster:
        out = tmp_path / "cluster.csv"
        code = main(["batch", str(sites), "--out", str(out), "--scheduler", cluster.scheduler_address, *WINDOW])
        _, err = capsys.readouterr()
        assert code == 0, err
    assert out.read_bytes() == local.read_bytes()
    assert scattered == ["Context"]  # the shared sky, once
    assert len(submitted) > 2 and all(args[0] == "Future" for args in submitted)  # each task refers to it


def test_without_dask_the_option_says_how_to_get_it(tmp_path, capsys, monkeypatch):
    monkeypatch.setitem(sys.modules, "distributed", None)  # as if not installed
    sites = tmp_path / "sites.csv"
    sites.write_text(HEADER + GOOD_ROWS[0] + "\n", "utf-8")
    code = main(["batch", str(sites), "--out", str(tmp_path / "r.csv"), "--scheduler", "tcp://127.0.0.1:8786",
                 *WINDOW])
    _, err = capsys.readouterr()
    assert code == 2 and "pip install 'leosite[cluster]'" in err, err
    assert not (tmp_path / "r.csv").exists()
