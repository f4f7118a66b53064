"""Names of planets and datasets as parts of file names."""


def file_stem(text):
    """A file-name-safe form of a planet or dataset name: letters, digits, '-' and '_' kept, anything else '_'."""
    return "".join(c if c.isalnum() or c in "-_" else "_" for c in str(text))
