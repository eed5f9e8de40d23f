//! The invented demo scenario: generator of raw sweeps and the manifest. OWNER: demo helper.
