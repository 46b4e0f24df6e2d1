"""The lab domain: samples, tests, results, specifications, stability studies and trends."""
