"""Random bad input never produces a traceback from deep inside: only InputError."""

import string

from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from kinage.errors import InputError
from kinage.io.schema import SCHEMA
from kinage.io.scenario import scenario_from_dict

scalars = st.one_of(
    st.none(), st.booleans(), st.integers(-10**6, 10**6), st.floats(allow_nan=True, allow_infinity=True),
    st.text(alphabet=string.printable, max_size=12),
    st.sampled_from(["4 km/s", "3 mas", "-1 pc", "1e99 yr", "nan", "10 eV", "2027-01-01", "sinusoid", "hms"]),
)
values = st.one_of(scalars, st.lists(scalars, max_size=3), st.dictionaries(st.text(max_size=3), scalars, max_size=2))
keys = st.sampled_from(sorted({k for t in SCHEMA.values() for k in t} | {"parallax_error", "ra_error", "bogus"}))
tables = st.dictionaries(keys, values, max_size=6)


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.dictionaries(st.sampled_from(["star", "campaign", "trace", "ages", "misc"]), tables, max_size=4))
def test_random_scenarios_raise_only_input_errors(raw):
    raw = {k: {kk: vv for kk, vv in v.items() if vv is not None} for k, v in raw.items()}
    try:
        scenario_from_dict(raw)
    except InputError as exc:
        assert str(exc)  # a message, naming the problem
