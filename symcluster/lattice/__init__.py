"""Clusters: sites, labelled bonds, built-in shapes and TOML cluster files (``clusters``)."""
