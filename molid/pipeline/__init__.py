"""The identify pipeline: runs to molar masses, samples and ranked candidates."""
