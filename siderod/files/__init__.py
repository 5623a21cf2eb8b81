"""Reading and checking the user's files: configuration, target lists, where things live on disk."""
