"""One module per screen, each with its ``.kv`` file beside it."""
