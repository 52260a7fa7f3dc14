"""What the athlete can sustain: critical power and W′ balance (cycling), critical speed
and D′ (running)."""
