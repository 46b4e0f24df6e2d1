"""Method plugins. The contract is in plugins.contract; discovery in plugins.registry."""
