"""Readers: turn files into plain data with source positions, then into validated models."""
