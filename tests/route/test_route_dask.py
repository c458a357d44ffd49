"""The same route on a Dask distributed cluster (started here, on loopback) gives the same results."""

from __future__ import annotations

import pytest
from routes import make_route

from engine.history.store import Store
from engine.route import load_route, run_route

distributed = pytest.importorskip("distributed")
pytestmark = pytest.mark.slow         # a local cluster starts and stops: about 13 s
MADE_AT = "2026-03-04T10:15+01:00"     # the reports' own time, the same for both runs so they compare equal


def _results(store: Store) -> dict:
    out = {}
    for r in store.readings():
        h = store.history(r["machine"])
        out[r["content_hash"]] = (r["taken_at"], r["urgency"], r["worst_zone"], r["summary"], r["top_fault"],
                                  r["top_certainty"], [x["indicators"] for x in h if x["id"] == r["id"]])
    return out


@pytest.mark.filterwarnings("ignore::DeprecationWarning")
@pytest.mark.filterwarnings("ignore::ResourceWarning")
def test_a_route_on_a_dask_cluster_matches_the_local_run(tmp_path):
    route_file = make_route(tmp_path / "r", n=4, bad=True)
    route = load_route(route_file)
    with Store(tmp_path / "local.sqlite") as store:
        local = run_route(route, store, tmp_path / "local", workers=2, made_at=MADE_AT)
        local_results = _results(store)
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True, host="127.0.0.1",
                                  dashboard_address=None, silence_logs=40,
                                  local_directory=str(tmp_path / "dask-work")) as cluster:
        with Store(tmp_path / "dask.sqlite") as store:
            remote = run_route(route, store, tmp_path / "dask", scheduler=cluster.scheduler_address, made_at=MADE_AT)
            dask_results = _results(store)
    assert remote.where.startswith("dask ")
    assert len(remote.diagnosed) == len(local.diagnosed) == 4
    assert [f["file"] for f in remote.failed] == [f["file"] for f in local.failed]
    assert dask_results == local_results
    for a, b in zip(sorted((tmp_path / "local").rglob("*.html")), sorted((tmp_path / "dask").rglob("*.html"))):
        assert a.read_text() == b.read_text()
