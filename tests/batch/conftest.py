"""Batch tests run once per backend: serial, a local process pool, and a real Dask
``LocalCluster`` of two workers on 127.0.0.1 (started once per session, stopped at the end).

A test asks for ``batch_backend`` and gets a fresh backend object of each kind in turn.
"""

from __future__ import annotations

import pytest

from meshprops.batch.backends import DaskBackend, ProcessPoolBackend, SerialBackend

BACKEND_NAMES = ("serial", "processes", "dask")


@pytest.fixture(scope="session")
def dask_cluster():
    """A LocalCluster of two single-thread worker processes on the loopback interface."""
    distributed = pytest.importorskip("distributed", reason="the dask extra (meshprops[dask]) is not installed")
    cluster = distributed.LocalCluster(
        n_workers=2,
        threads_per_worker=1,
        processes=True,
        host="127.0.0.1",
        dashboard_address=None,
        protocol="tcp",
        silence_logs=40,  # logging.ERROR
    )
    try:
        yield cluster
    finally:
        cluster.close()


@pytest.fixture(params=BACKEND_NAMES)
def batch_backend(request):
    """Each backend in turn; closed after the test (the cluster itself stays up for the session)."""
    if request.param == "serial":
        backend = SerialBackend()
    elif request.param == "processes":
        backend = ProcessPoolBackend(2)
    else:
        backend = DaskBackend(request.getfixturevalue("dask_cluster").scheduler_address)
    try:
        yield backend
    finally:
        backend.close()
