from deid.operators import (  # noqa: F401
    contact,
    dates,  # noqa: F401
    identifiers,
    names,
    numbers,
    places,
    simple,
)
