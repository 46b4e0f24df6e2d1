"""Request and response serializers of the REST API, one module per topic."""
