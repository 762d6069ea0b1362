from deid.operators import dates  # noqa: F401
from deid.operators import contact, identifiers, names, numbers, places, simple  # noqa: F401
