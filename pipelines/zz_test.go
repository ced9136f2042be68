package pipelines
import ("testing";"os")
func TestZZDemoCheck(t *testing.T) { checkDemoExtremes(t, os.Getenv("ZZDIR")) }
