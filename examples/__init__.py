"""The example study: the invented Kestrel-2 mission (package data for ``orbitledger demo``)."""
