"""Write services: plain, typed functions named <thing>_<action>."""
