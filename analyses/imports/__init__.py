"""Reading instrument export files: pure, no ORM. pandas is imported where a file is read."""
