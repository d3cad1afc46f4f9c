"""One module per subcommand: ``register(subparsers)`` adds its parser, ``run(args)`` runs it.

The CLI (:mod:`thresholdc.cli`) binds each module's ``run`` to the subparser named after the
module, so a command module needs no dispatch code of its own.  The command line imports a
command's module only when that command runs (or asks for its own ``--help``); the top-level
``--help`` lists the commands from :data:`SUMMARY` alone.
"""

#: Each command's one-line summary, in the order ``thresholdc --help`` lists the commands.
SUMMARY: dict[str, str] = {
    "compile": "compile a rule file or netlist into a verified threshold network",
    "verify": "check that a network computes its rules (exit 0 equal, 1 different)",
    "inspect": "show a network's neurons layer by layer, with totals",
    "table": "print the truth table of a rule file or netlist",
    "export": "convert a saved network to another format (.json, .npz, .onnx)",
    "draw": "draw a network in layers (.png or .svg)",
    "train": "train a network on labelled data, starting from its rules",
    "score": "accuracy, precision, recall and F1 of a network's outputs on labelled data",
    "diff": "read a trained network back as rules and compare them with the rule file",
    "report": "write an HTML page: summary, layers, drawing, verification, training",
    "example": "write an example netlist (.bench), e.g. mult16 or adder8",
}

