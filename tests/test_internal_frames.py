"""frames.replace_at on categorical text columns: same values as plain assignment (pandas semantics)."""

import numpy as np
import pandas as pd

from tracescreen._internal.frames import replace_at


def test_replace_at_categorical_with_text_equals_plain_assignment():
    """Putting text (new, repeated, None, numbers) into a categorical column gives the values plain object assignment gives, as str()."""
    col = pd.Series(pd.Categorical(["meets", "exceeds", "meets", "no_limit", "meets"]))
    values = np.array(["exceeds", "a longer note " * 20, None, 1], dtype=object)
    out = replace_at(col, [0, 2, 3, 4], values)
    plain = col.astype(object).to_numpy(copy=True)
    plain[[0, 2, 3, 4]] = [str(v) for v in values]
    assert isinstance(out, pd.Categorical)
    assert list(np.asarray(out, dtype=object)) == list(plain)
    assert set(out.categories) >= set(plain) and out.categories.is_unique
