"""One module per command; each exposes ``register(app)``. Thin: parse, call the core, render."""
