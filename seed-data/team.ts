// The demo scenario: an invented device group, "Kestrel Devices", and its people.
export const TEAM_DOMAIN = "kestrel-devices.test";

export const FAMILIES = [
  { key: "arsenides", name: "Arsenides", description: "GaAs, AlAs, InAs and their alloys" },
  { key: "phosphides", name: "Phosphides", description: "InP, GaP and their alloys" },
  { key: "antimonides", name: "Antimonides", description: "GaSb and its alloys" },
  { key: "nitrides", name: "Nitrides", description: "GaN and its alloys" },
  { key: "group-iv", name: "Group IV", description: "Si, Ge and SiGe" },
] as const;

export type DemoPerson = {
  email: string;
  name: string;
  role: "reader" | "contributor" | "lead" | "admin";
  active: boolean;
  leads: string[];
  notifyMode: "immediate" | "digest";
};

export const PEOPLE: DemoPerson[] = [
  { email: `ines.carvalho@${TEAM_DOMAIN}`, name: "Inês Carvalho", role: "admin", active: true, leads: [], notifyMode: "immediate" },
  { email: `ravi.menon@${TEAM_DOMAIN}`, name: "Ravi Menon", role: "lead", active: true, leads: ["arsenides", "antimonides"], notifyMode: "immediate" },
  { email: `hanna.lindqvist@${TEAM_DOMAIN}`, name: "Hanna Lindqvist", role: "lead", active: true, leads: ["arsenides", "nitrides", "phosphides", "group-iv"], notifyMode: "digest" },
  { email: `tomas.okafor@${TEAM_DOMAIN}`, name: "Tomás Okafor", role: "contributor", active: true, leads: [], notifyMode: "immediate" },
  { email: `mei.tanaka@${TEAM_DOMAIN}`, name: "Mei Tanaka", role: "contributor", active: true, leads: [], notifyMode: "immediate" },
  { email: `priya.raman@${TEAM_DOMAIN}`, name: "Priya Raman", role: "reader", active: true, leads: [], notifyMode: "immediate" },
  { email: `jonas.weber@${TEAM_DOMAIN}`, name: "Jonas Weber", role: "reader", active: false, leads: [], notifyMode: "immediate" },
];
