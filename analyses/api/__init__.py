"""The REST API of the lab domain."""
