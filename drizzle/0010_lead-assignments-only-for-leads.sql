-- Assignments left behind by a role change away from lead (admin kept them before) give no rights; remove them.
DELETE fl FROM family_leads fl JOIN users u ON u.id = fl.user_id WHERE u.role <> 'lead';
