package plots

import "testing"

func TestQuickFront(t *testing.T) {
	f, err := Front(demoFront())
	if err != nil {
		t.Fatal(err)
	}
	if err := f.Save("/tmp/front.png", 0, 0); err != nil {
		t.Fatal(err)
	}
	if err := f.Save("/tmp/front.svg", 0, 0); err != nil {
		t.Fatal(err)
	}
}

func TestQuickResponse(t *testing.T) {
	f, err := Response(demoResponse(20000))
	if err != nil {
		t.Fatal(err)
	}
	if err := f.Save("/tmp/response.png", 0, 0); err != nil {
		t.Fatal(err)
	}
	if err := f.Save("/tmp/response.svg", 0, 0); err != nil {
		t.Fatal(err)
	}
}

func TestQuickStages(t *testing.T) {
	f, err := Stages(demoStages())
	if err != nil {
		t.Fatal(err)
	}
	if err := f.Save("/tmp/stages.png", 0, 0); err != nil {
		t.Fatal(err)
	}
}
