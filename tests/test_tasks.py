"""Process pools of heatloom.tasks: the workers' native thread pools (numpy's BLAS) run one thread each."""

from concurrent.futures import ProcessPoolExecutor

from threadpoolctl import threadpool_info

from heatloom.tasks import TaskRunner, numeric_threads, one_numeric_thread


def blas_threads() -> list[int]:
    """Threads of every BLAS library loaded in this process (numpy's is loaded by the import above)."""
    import numpy as np

    np.ones((4, 4)) @ np.ones((4, 4))
    return [lib["num_threads"] for lib in threadpool_info() if lib["user_api"] == "blas"]


def test_the_initializer_leaves_one_blas_thread_in_a_forked_worker():
    with ProcessPoolExecutor(max_workers=1, initializer=one_numeric_thread) as pool:
        threads = pool.submit(blas_threads).result()
    assert threads and set(threads) == {1}


def test_task_runner_workers_have_one_blas_thread():
    runner = TaskRunner(2, None, None)
    try:
        out = runner.map(blas_threads, [()] * 2, phase="check")
    finally:
        runner.close()
    assert len(out) == 2 and all(threads and set(threads) == {1} for threads in out)


def test_numeric_threads_limits_this_process_inside_the_block_only():
    before = blas_threads()
    with numeric_threads(1):
        assert set(blas_threads()) == {1}
    assert blas_threads() == before
