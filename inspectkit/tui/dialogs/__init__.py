"""Modal dialogs: each returns its answer through `dismiss`."""
