package server_test

import (
	"path/filepath"
	"slices"
	"testing"

	natsserver "github.com/nats-io/nats-server/v2/server"

	"fvsweep/coordinator/server"
	"fvsweep/deploy"
	"fvsweep/sweep/wire"
)

// TestNodeUsersRights: the two users of deploy/nats have the passwords
// from the environment and exactly the rights the embedded server gives
// (CoordinatorRights and WorkerRights for the default names).
func TestNodeUsersRights(t *testing.T) {
	t.Setenv("FVSWEEP_COORDINATOR_TOKEN", "c0ffee01")
	t.Setenv("FVSWEEP_WORKER_TOKEN", "deadbeef02")
	o, err := natsserver.ProcessConfigFile(filepath.Join(deploy.NATSDir(), "node-1.conf"))
	if err != nil {
		t.Fatalf("node-1.conf: %v", err)
	}
	users := map[string]*natsserver.User{}
	for _, u := range o.Users {
		users[u.Username] = u
	}
	co, wk := users["coordinator"], users["worker"]
	if co == nil || wk == nil || co.Password != "c0ffee01" || wk.Password != "deadbeef02" {
		t.Fatalf("users %+v, want coordinator and worker with the passwords from the environment", o.Users)
	}
	n := wire.Names{}
	for _, c := range []struct {
		who  string
		conf *natsserver.Permissions
		code *natsserver.Permissions
	}{{"coordinator", co.Permissions, server.CoordinatorRights(n)}, {"worker", wk.Permissions, server.WorkerRights(n)}} {
		for _, side := range []struct {
			what       string
			conf, code *natsserver.SubjectPermission
		}{{"publish", c.conf.Publish, c.code.Publish}, {"subscribe", c.conf.Subscribe, c.code.Subscribe}} {
			if !sameSet(side.conf.Allow, side.code.Allow) || !sameSet(side.conf.Deny, side.code.Deny) {
				t.Errorf("%s %s rights differ:\n deploy/nats: allow %q deny %q\n code:        allow %q deny %q",
					c.who, side.what, side.conf.Allow, side.conf.Deny, side.code.Allow, side.code.Deny)
			}
		}
	}
	for _, s := range []string{n.JobFilter(""), n.API(wire.VerbSubmit), n.API(wire.VerbCancel)} {
		if !slices.Contains(wk.Permissions.Publish.Deny, s) {
			t.Errorf("worker is not denied %s", s)
		}
	}
}

func sameSet(a, b []string) bool {
	a, b = slices.Clone(a), slices.Clone(b)
	slices.Sort(a)
	slices.Sort(b)
	return slices.Equal(a, b)
}
