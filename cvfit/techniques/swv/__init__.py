"""Square-wave voltammetry as a technique (:mod:`.technique`, :mod:`.measurement`)."""
