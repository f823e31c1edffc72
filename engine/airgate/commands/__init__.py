"""One module per CLI command. Each defines ``register(subparsers)`` and ``run(args) -> int``.

``airgate.cli`` assembles them in the order of :data:`COMMANDS`.
"""

COMMANDS = ("check", "compare", "explain", "import_", "plot", "rules", "schema", "template")
