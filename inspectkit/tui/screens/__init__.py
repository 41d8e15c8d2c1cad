"""One screen per module, each with its stylesheet beside it."""
