"""ordered_map: threaded blocks come back in input order, with inputs taken lazily (a bounded window);
BackgroundWork: jobs in order on one background thread, errors raised, clean-up after the job under way."""

import threading
import time

import pytest

from tracescreen._internal.parallel import BackgroundWork, ordered_map


def test_results_in_input_order_even_when_early_blocks_are_slow():
    """Same list as the built-in map (the reference), whatever order the threads finish in."""
    def slow_first(i):
        time.sleep(0.02 if i % 3 == 0 else 0.0)
        return i * i

    args = [(i,) for i in range(20)]
    assert list(ordered_map(slow_first, args, 2)) == list(map(slow_first, range(20)))


def test_inputs_are_drawn_lazily_at_most_workers_plus_one_ahead():
    """A generator of inputs is advanced only as results are taken (memory holds a few blocks)."""
    drawn = []

    def inputs():
        for i in range(10):
            drawn.append(i)
            yield (i,)

    it = ordered_map(lambda i: i, inputs(), 2)
    assert next(it) == 0
    assert len(drawn) <= 3
    assert list(it) == list(range(1, 10))


def test_background_work_runs_jobs_in_order_one_at_a_time_off_the_calling_thread():
    """Jobs run in submission order on one other thread; a submit waits for the job before it (common
    practice for a bounded producer/consumer: at most one job's inputs waiting)."""
    seen, threads, running = [], set(), []

    def job(k):
        def run():
            running.append(k)
            assert len(running) == 1  # never two at once
            time.sleep(0.01)
            seen.append(k)
            threads.add(threading.get_ident())
            running.pop()
        return run

    with BackgroundWork() as work:
        for k in range(5):
            work.submit(job(k))
            assert seen == list(range(k))  # the previous job had ended before this one started
    assert seen == list(range(5))
    assert threading.get_ident() not in threads and len(threads) == 1


def test_background_work_raises_a_jobs_error_and_waits_for_a_job_when_the_block_fails():
    def fail():
        raise OSError(28, "No space left on device")

    with pytest.raises(OSError, match="No space"):  # raised at the end of the block
        with BackgroundWork() as work:
            work.submit(fail)
    with pytest.raises(OSError, match="No space"):  # raised by the next submit
        with BackgroundWork() as work:
            work.submit(fail)
            work.submit(lambda: None)
    done = []
    with pytest.raises(KeyboardInterrupt):  # the block's own error wins; the job under way ended first
        with BackgroundWork() as work:
            work.submit(lambda: (time.sleep(0.2), done.append(1)))
            raise KeyboardInterrupt
    assert done == [1]


def test_background_work_without_a_thread_runs_each_job_at_once():
    seen = []
    with BackgroundWork(background=False) as work:
        work.submit(lambda: seen.append(1))
        assert seen == [1]
