"""Documents rendered for people outside the lab: the certificate of analysis as PDF and HTML."""
