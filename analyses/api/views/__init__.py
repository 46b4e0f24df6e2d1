"""Thin views of the REST API, one module per topic: validate, call one service or
selector, serialize its output."""
