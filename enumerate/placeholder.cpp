// Translation unit placeholder until the walker lands.
