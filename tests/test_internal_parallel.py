"""ordered_map: threaded blocks come back in input order, with inputs taken lazily (a bounded window)."""

import time

from tracescreen._internal.parallel import ordered_map


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
