CREATE TRIGGER audit_log_no_update BEFORE UPDATE ON audit_log FOR EACH ROW SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'audit_log is append-only';
--> statement-breakpoint
CREATE TRIGGER audit_log_no_delete BEFORE DELETE ON audit_log FOR EACH ROW SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'audit_log is append-only';
--> statement-breakpoint
CREATE TRIGGER revisions_no_update BEFORE UPDATE ON revisions FOR EACH ROW SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'revisions are immutable';
--> statement-breakpoint
CREATE TRIGGER revisions_no_delete BEFORE DELETE ON revisions FOR EACH ROW SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'revisions are immutable';
--> statement-breakpoint
CREATE TRIGGER releases_no_update BEFORE UPDATE ON releases FOR EACH ROW SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'frozen releases are immutable';
--> statement-breakpoint
CREATE TRIGGER releases_no_delete BEFORE DELETE ON releases FOR EACH ROW SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'frozen releases are immutable';
--> statement-breakpoint
CREATE TRIGGER release_items_no_update BEFORE UPDATE ON release_items FOR EACH ROW SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'frozen releases are immutable';
--> statement-breakpoint
CREATE TRIGGER release_items_no_delete BEFORE DELETE ON release_items FOR EACH ROW SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'frozen releases are immutable';
