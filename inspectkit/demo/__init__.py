"""The invented demo scenario: its data file, and the generator that turns it into a database."""
