"""Planning a measurement before anyone weighs anything: what the equipment can tell apart and decide."""
