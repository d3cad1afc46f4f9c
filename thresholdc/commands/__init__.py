"""One module per subcommand: ``register(subparsers)`` adds its parser, ``run(args)`` runs it.

The CLI (:mod:`thresholdc.cli`) binds each module's ``run`` to the subparser named after the
module, so a command module needs no dispatch code of its own.
"""
