"""The ``orbitledger`` command line: one module of verbs per part of the product."""
