"""Pure computations for traceable measurements (standardisations, usability rules); no ORM."""
