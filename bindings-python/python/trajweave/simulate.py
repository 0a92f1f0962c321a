"""``simulate``: a seeded panel of the invented kidney-registry scenario."""

from . import _trajweave
from .errors import InvalidOptionError


def simulate(subjects=3000, seed=2026, as_frame=True, **options):
    """Simulates a panel with a known structure (see the core's ``simulate`` docs).

    Every option is checked by the core, in the order given, so names and errors are the
    same in every front. Returns a pandas DataFrame (columns ``patient``, ``years``, ``egfr``,
    ``age``, ``female``, ``diabetes``, ``acr``), or with ``as_frame=False`` a dict of numpy
    arrays.

    Examples
    --------
    >>> import trajweave as tw
    >>> df = tw.simulate(subjects=5, seed=1)
    >>> list(df.columns)[:3], int(df["patient"].max())
    (['patient', 'years', 'egfr'], 5)
    """
    pairs = [("subjects", subjects), ("seed", seed)] + list(options.items())
    try:
        pairs = [(name, float(value)) for name, value in pairs]
    except (TypeError, ValueError):
        name, value = next((n, v) for n, v in pairs if not isinstance(v, (int, float)))
        raise InvalidOptionError(f"`{name}` = {value!r} is not allowed: give a number") from None
    columns = _trajweave.simulate_columns(pairs)
    if not as_frame:
        return columns
    import pandas as pd

    return pd.DataFrame({name: columns[name] for name in _trajweave.simulated_columns()})
