"""Partitioning of NEE into gross primary production and ecosystem respiration."""
